import { describe, it, expect } from 'vitest';
import { Matrix, inverse } from 'ml-matrix';
import {
  choleskyInPlace,
  euclideanNorm,
  gramMatrix,
  inverseSymmetricPositiveDefinite,
  quadraticForm,
  transposeTimesVector,
} from '../src/fit/dense';
import { seededRandom } from '../src/fit/random';

// Oracle: ml-matrix (an independent implementation: plain triple loops and LU inverse).
function randomMatrix(seed: number, m: number, n: number): Float64Array {
  const rng = seededRandom(seed);
  return Float64Array.from({ length: m * n }, () => rng.normal());
}
function toMatrix(a: Float64Array, m: number, n: number): Matrix {
  return new Matrix(Array.from({ length: m }, (_, i) => [...a.subarray(i * n, i * n + n)]));
}

describe('dense kernels against ml-matrix', () => {
  it('J^T J and J^T v for every column count 1..13 (blocked and remainder paths)', () => {
    for (let n = 1; n <= 13; n++) {
      const m = 17 + n;
      const j = randomMatrix(n, m, n);
      const v = randomMatrix(100 + n, m, 1);
      const gram = new Float64Array(n * n);
      const grad = new Float64Array(n);
      gramMatrix(j, m, n, gram, undefined, v, grad);
      const J = toMatrix(j, m, n);
      const expected = J.transpose().mmul(J);
      const expectedGrad = J.transpose().mmul(toMatrix(v, m, 1));
      const grad2 = new Float64Array(n);
      transposeTimesVector(j, m, n, v, grad2);
      for (let a = 0; a < n; a++) {
        // Tolerance 1e-12 relative to the diagonal scale (different summation orders).
        for (let b = 0; b < n; b++) expect(Math.abs(gram[a * n + b] - expected.get(a, b))).toBeLessThan(1e-12 * m);
        expect(Math.abs(grad[a] - expectedGrad.get(a, 0))).toBeLessThan(1e-12 * m);
        expect(Math.abs(grad2[a] - expectedGrad.get(a, 0))).toBeLessThan(1e-12 * m);
      }
    }
  });

  it('Cholesky factor reproduces the matrix and the inverse matches the LU inverse', () => {
    const n = 7;
    const j = randomMatrix(5, 30, n);
    const gram = new Float64Array(n * n);
    gramMatrix(j, 30, n, gram);
    const l = Float64Array.from(gram);
    expect(choleskyInPlace(l, n)).toBe(true);
    for (let a = 0; a < n; a++) {
      for (let b = 0; b <= a; b++) {
        let s = 0;
        for (let k = 0; k <= b; k++) s += l[a * n + k] * l[b * n + k];
        expect(Math.abs(s - gram[a * n + b])).toBeLessThan(1e-12 * 30);
      }
    }
    const inv = inverseSymmetricPositiveDefinite(gram, n)!;
    const expected = inverse(toMatrix(gram, n, n));
    for (let a = 0; a < n * n; a++) expect(Math.abs(inv[a] - expected.get(Math.floor(a / n), a % n))).toBeLessThan(1e-12);
  });

  it('reports a singular matrix as null and a non-positive pivot as false', () => {
    // Rank one: [[1, 2], [2, 4]].
    expect(inverseSymmetricPositiveDefinite(Float64Array.from([1, 2, 2, 4]), 2)).toBeNull();
    expect(choleskyInPlace(Float64Array.from([1, 2, 2, 3]), 2)).toBe(false); // indefinite
  });

  it('norm avoids overflow and quadratic form matches x^T A x', () => {
    expect(euclideanNorm(Float64Array.from([3e200, 4e200]))).toBeCloseTo(5e200, -186);
    const a = Float64Array.from([2, 1, 1, 3]);
    expect(quadraticForm(a, 2, Float64Array.from([1, -1]))).toBe(2 - 1 - 1 + 3);
  });
});
