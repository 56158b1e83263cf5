import { describe, expect, it } from 'vitest';
import { gramMatrixOfColumns } from '../src/fit/dense';
import { fitLeastSquares } from '../src/fit/levenberg-marquardt';
import { seededRandom } from '../src/fit/random';

/** Plain dot products: the brute-force oracle for J^T J and J^T v (column-major J, m x n). */
function oracle(t: Float64Array, m: number, n: number, v: Float64Array) {
  const gram = new Float64Array(n * n);
  const grad = new Float64Array(n);
  for (let a = 0; a < n; a++) {
    for (let b = 0; b < n; b++) {
      let s = 0;
      for (let i = 0; i < m; i++) s += t[a * m + i] * t[b * m + i];
      gram[a * n + b] = s;
    }
    let g = 0;
    for (let i = 0; i < m; i++) g += t[a * m + i] * v[i];
    grad[a] = g;
  }
  return { gram, grad };
}

describe('gramMatrixOfColumns (WebAssembly SIMD kernel with scalar fallback)', () => {
  it('equals plain dot products for shapes on and off the 2x4 block size (rel. 1e-13)', () => {
    const random = seededRandom(11);
    for (const [m, n] of [[3, 1], [7, 2], [221, 4], [221, 5], [222, 6], [223, 7], [401, 8], [221, 35], [500, 36], [99, 33]]) {
      const t = Float64Array.from({ length: m * n }, () => random.normal());
      const v = Float64Array.from({ length: m }, () => random.normal());
      const gram = new Float64Array(n * n);
      const grad = new Float64Array(n);
      gramMatrixOfColumns(t, m, n, gram, v, grad);
      const ref = oracle(t, m, n, v);
      for (let i = 0; i < n * n; i++) expect(Math.abs(gram[i] - ref.gram[i])).toBeLessThan(1e-13 * (1 + Math.abs(ref.gram[i])) * Math.sqrt(m));
      for (let i = 0; i < n; i++) expect(Math.abs(grad[i] - ref.grad[i])).toBeLessThan(1e-13 * (1 + Math.abs(ref.grad[i])) * Math.sqrt(m));
    }
  });
});

describe('fitLeastSquares with a column-major Jacobian', () => {
  it('gives the same result as with the row-major Jacobian (exponential decay, invented data)', () => {
    const random = seededRandom(5);
    const x = Float64Array.from({ length: 60 }, (_, i) => i * 0.1);
    const y = Float64Array.from(x, (t) => 2.5 * Math.exp(-1.3 * t) + 0.4 + 0.01 * random.normal());
    const m = x.length;
    const residuals = (p: Float64Array, out: Float64Array) => { for (let i = 0; i < m; i++) out[i] = p[0] * Math.exp(-p[1] * x[i]) + p[2] - y[i]; };
    const rows = (p: Float64Array, out: Float64Array) => {
      for (let i = 0; i < m; i++) { const e = Math.exp(-p[1] * x[i]); out[3 * i] = e; out[3 * i + 1] = -p[0] * x[i] * e; out[3 * i + 2] = 1; }
    };
    const columns = (p: Float64Array, out: Float64Array) => {
      for (let i = 0; i < m; i++) { const e = Math.exp(-p[1] * x[i]); out[i] = e; out[m + i] = -p[0] * x[i] * e; out[2 * m + i] = 1; }
    };
    const a = fitLeastSquares({ residuals, jacobian: rows, nResiduals: m, initial: [1, 1, 0] });
    const b = fitLeastSquares({ residuals, jacobianColumns: columns, nResiduals: m, initial: [1, 1, 0] });
    expect(b.status).toBe('converged');
    expect(b.iterations).toBe(a.iterations);
    for (let i = 0; i < 3; i++) expect(b.params[i]).toBeCloseTo(a.params[i], 12);
    for (let i = 0; i < 9; i++) expect(b.covariance![i]).toBeCloseTo(a.covariance![i], 10);
  });
});
