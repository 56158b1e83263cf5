import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix, inverse } from 'ml-matrix';
import { buildExafsProblem, noiseMatrix, type FitDataset } from '../src/fit/exafs/problem';
import { noiseBlock, propagateNoise, studentTFactor } from '../src/fit/noise-propagation';
import { evaluateModel } from '../src/model/exafs';
import { parametricProvider } from '../src/scatter/parametric';
import { tableGrid } from '../src/model/tables';
import { uniformGrid } from '../src/numeric/fourier';
import { seededRandom } from '../src/fit/random';
import type { ScatteringPath } from '../src/paths/pathset';
import { hasPythonModules, runPython } from './helpers/python';

// Invented test model (not data): one shell, parametric tables.
const paths: ScatteringPath[] = [{ id: 'O.1', kind: 'single', legs: 2, scatterer: 'O', r: 2.0, degeneracy: 6, spread: 0 }];
const tables = paths.map((p) => parametricProvider.compute({ absorber: 'Ni', scatterer: p.scatterer, edge: 'K', distance: p.r, k: tableGrid() }));
const k = uniformGrid(0, 15, 0.05);
const chi = evaluateModel(k, tables, { s0sq: 0.9, e0: 0, paths: [{ n: 6, r: 2.0, msrd: 0.005, c3: 0, c4: 0 }] }).chi;
const rules = [{ n: '6', r: 'r1', msrd: 's1', c3: '0', c4: '0' }];
const parameters = [{ name: 's0sq', value: 0.9, state: 'fixed' as const }, { name: 'e0', value: 0 }, { name: 'r1', value: 2.0 }, { name: 's1', value: 0.005 }];

function dataset(fitIn: 'k' | 'R' | 'q', kWeightings: number[], name = 'set'): FitDataset {
  return {
    name, k, chi, noiseChi: 0.003, paths, tables, rules, kRange: [3, 13.5], kWeightings,
    kTaper: { shape: 'hann', taper: 1 }, rRange: [1, 2.8], rTaper: { shape: 'hann', taper: 0.4 }, fitIn,
  };
}

describe('noise map of a data set (closed form of test/../problem.ts)', () => {
  for (const fitIn of ['k', 'R', 'q'] as const) {
    for (const kWeightings of [[2], [1, 3]]) {
      it(`equals the residual map applied to unit data vectors, ${fitIn} space, k-weights ${kWeightings.join(',')}`, () => {
        const problem = buildExafsProblem(parameters, [dataset('k', [1]), dataset(fitIn, kWeightings, 'second')]);
        const d = problem.datasets[1];
        const { columns, matrix } = noiseMatrix(d);
        // residual = P (model - data): perturbing one data point by its noise moves the residuals by -P' e_i
        const free = problem.parameters.initialFree;
        const base = new Float64Array(problem.nResiduals);
        problem.residuals(free, base);
        let worst = 0;
        let scale = 0;
        for (const [c, i] of columns.entries()) {
          if (c % 7 !== 0 && c !== columns.length - 1) continue; // every 7th column and the last
          const moved = chi.slice();
          moved[i] += d.spec.noiseChi;
          const other = buildExafsProblem(parameters, [dataset('k', [1]), { ...dataset(fitIn, kWeightings, 'second'), chi: moved }]);
          const out = new Float64Array(problem.nResiduals);
          other.residuals(free, out);
          for (let row = 0; row < d.length; row++) {
            const expected = base[d.offset + row] - out[d.offset + row];
            worst = Math.max(worst, Math.abs(matrix[row * columns.length + c] - expected));
            scale = Math.max(scale, Math.abs(expected));
          }
        }
        expect(scale).toBeGreaterThan(0);
        expect(worst / scale).toBeLessThan(1e-10);
      });
    }
  }

  it('gives each residual unit variance on average, as the noise normalisation intends (k and r space)', () => {
    for (const fitIn of ['k', 'R'] as const) {
      const d = buildExafsProblem(parameters, [dataset(fitIn, [2])]).datasets[0];
      const block = noiseBlock(0, d.length, noiseMatrix(d).columns.length, noiseMatrix(d).matrix);
      // tr(S) / rows: exactly 1 for the k-space weighting by the rms weight; for R, Parseval's
      // estimate of the noise spread over 0..pi/(2 dk) (within a few per cent inside an R range)
      expect(block.trace / d.length).toBeGreaterThan(fitIn === 'k' ? 0.999999 : 0.9);
      expect(block.trace / d.length).toBeLessThan(fitIn === 'k' ? 1.000001 : 1.1);
    }
  });
});

describe('propagation of correlated noise to the parameters (linear least squares)', () => {
  // Linear model y = X b + L n with white n: every quantity has a closed form to compare with.
  const random = seededRandom(11);
  const m = 40;
  const nu = 3;
  const nData = 25;
  const X = Matrix.from1DArray(m, nu, Float64Array.from({ length: m * nu }, () => random.normal()));
  const L = Matrix.from1DArray(m, nData, Float64Array.from({ length: m * nData }, () => random.normal() * 0.3));
  const A = inverse(X.transpose().mmul(X));
  const S = L.mmul(L.transpose());
  const H = X.mmul(A).mmul(X.transpose());
  const M = Matrix.eye(m).sub(H).mmul(S);

  it('matches the sandwich covariance, E[ssr] = tr((I - H) S) and the Satterthwaite degrees of freedom (1e-10)', () => {
    const ssr = 7.5;
    const result = propagateNoise(Float64Array.from(X.to1DArray()), m, nu, Float64Array.from(A.to1DArray()), ssr, [noiseBlock(0, m, nData, Float64Array.from(L.to1DArray()))])!;
    const sandwich = A.mmul(X.transpose()).mmul(S).mmul(X).mmul(A);
    const expected = M.trace();
    const dof = (expected * expected) / M.mmul(M).trace();
    for (let i = 0; i < nu * nu; i++) expect(result.noiseCovariance[i]).toBeCloseTo(sandwich.to1DArray()[i], 10);
    expect(result.expectedSumOfSquares / expected - 1).toBeLessThan(1e-10);
    expect(Math.abs(result.effectiveDegreesOfFreedom / dof - 1)).toBeLessThan(1e-10);
    expect(result.misfitRatio).toBeCloseTo(ssr / expected, 12);
    expect(result.covariance[0]).toBeCloseTo(result.noiseCovariance[0] * result.misfitRatio, 14);
  });

  it('splits block-diagonal noise (two data sets) exactly like the whole', () => {
    const top = L.subMatrix(0, 19, 0, nData - 1);
    const bottom = L.subMatrix(20, m - 1, 0, nData - 1);
    // two data sets with independent noise: S = diag(S_top, S_bottom)
    const Sb = new Matrix(m, m);
    Sb.setSubMatrix(top.mmul(top.transpose()), 0, 0);
    Sb.setSubMatrix(bottom.mmul(bottom.transpose()), 20, 20);
    const blocks = [noiseBlock(0, 20, nData, Float64Array.from(top.to1DArray())), noiseBlock(20, 20, nData, Float64Array.from(bottom.to1DArray()))];
    const result = propagateNoise(Float64Array.from(X.to1DArray()), m, nu, Float64Array.from(A.to1DArray()), 1, blocks)!;
    const sandwich = A.mmul(X.transpose()).mmul(Sb).mmul(X).mmul(A);
    const Mb = Matrix.eye(m).sub(H).mmul(Sb);
    for (let i = 0; i < nu * nu; i++) expect(result.noiseCovariance[i]).toBeCloseTo(sandwich.to1DArray()[i], 10);
    expect(Math.abs(result.effectiveDegreesOfFreedom / (Mb.trace() ** 2 / Mb.mmul(Mb).trace()) - 1)).toBeLessThan(1e-10);
  });

  it('reduces to the textbook white-noise case: V = (X^T X)^-1, E[ssr] = m - nu, m - nu degrees of freedom', () => {
    // common practice, no source: ordinary least squares with unit-variance independent errors
    const identity = Float64Array.from(Matrix.eye(m).to1DArray());
    const result = propagateNoise(Float64Array.from(X.to1DArray()), m, nu, Float64Array.from(A.to1DArray()), m - nu, [noiseBlock(0, m, m, identity)])!;
    for (let i = 0; i < nu * nu; i++) expect(result.noiseCovariance[i]).toBeCloseTo(A.to1DArray()[i], 12);
    expect(result.expectedSumOfSquares).toBeCloseTo(m - nu, 9);
    expect(result.effectiveDegreesOfFreedom).toBeCloseTo(m - nu, 9);
    expect(result.misfitRatio).toBeCloseTo(1, 12);
  });

  it('has a noise spectrum far from flat in R space with a Hann window: fewer effective points than Stern counts', () => {
    const problem = buildExafsProblem(parameters, [dataset('R', [2])]);
    const d = problem.datasets[0];
    const { columns, matrix } = noiseMatrix(d);
    const P = Matrix.from1DArray(d.length, columns.length, matrix);
    const eigen = new EigenvalueDecomposition(P.mmul(P.transpose())).realEigenvalues;
    const trace = eigen.reduce((a, b) => a + b, 0);
    const participation = trace ** 2 / eigen.reduce((a, b) => a + b * b, 0);
    // Stern's count for k 3-13.5, R 1-2.8: 2 * 10.5 * 1.8 / pi + 2 = 14.0
    expect(problem.nIndependent).toBeCloseTo(14.03, 2);
    expect(participation).toBeLessThan(0.75 * problem.nIndependent);
  });
});

describe.skipIf(!hasPythonModules('scipy.stats'))('Student t factor against scipy.stats.t.ppf (skipped: no python3-scipy)', () => {
  it('agrees to 1e-8 for levels 0.68-0.99 and 1.5-200 degrees of freedom', () => {
    const cases = [[0.95, 7.44], [0.95, 1.5], [0.683, 12], [0.9, 30], [0.99, 200], [0.95, 3.2]];
    const reference = runPython<number[]>('import json, sys\nfrom scipy.stats import t\nprint(json.dumps([t.ppf((1 + l) / 2, d) for l, d in json.load(sys.stdin)]))', cases);
    cases.forEach(([level, dof], i) => expect(Math.abs(studentTFactor(level, dof) / reference[i] - 1)).toBeLessThan(1e-8));
  });
});
