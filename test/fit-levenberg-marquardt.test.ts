import { describe, it, expect } from 'vitest';
import { Matrix, inverse } from 'ml-matrix';
import { fitLeastSquares, type LeastSquaresProblem } from '../src/fit/levenberg-marquardt';
import { fitLeastSquaresMultiStart } from '../src/fit/multistart';
import { seededRandom } from '../src/fit/random';
import { InputError } from '../src/core/errors';
import { HAVE_SCIPY, runPython } from './fit-python-helper';

/** Residual problem from a model y(t; p) with optional analytic Jacobian. */
function curveProblem(
  t: Float64Array,
  y: Float64Array,
  model: (p: Float64Array, ti: number) => number,
  initial: number[],
  gradient?: (p: Float64Array, ti: number, out: Float64Array) => void,
): LeastSquaresProblem {
  const n = initial.length;
  const g = new Float64Array(n);
  return {
    nResiduals: t.length,
    initial,
    residuals(p, out) {
      for (let i = 0; i < t.length; i++) out[i] = model(p, t[i]) - y[i];
    },
    jacobian: gradient
      ? (p, out) => {
          for (let i = 0; i < t.length; i++) {
            gradient(p, t[i], g);
            for (let j = 0; j < n; j++) out[i * n + j] = g[j];
          }
        }
      : undefined,
  };
}

const rosenbrock: LeastSquaresProblem = {
  nResiduals: 2,
  initial: [-1.2, 1],
  residuals(p, out) {
    out[0] = 10 * (p[1] - p[0] * p[0]);
    out[1] = 1 - p[0];
  },
  jacobian(p, out) {
    out[0] = -20 * p[0];
    out[1] = 10;
    out[2] = -1;
    out[3] = 0;
  },
};

function decayData(seed: number, m = 60, sigma = 0.02) {
  const rng = seededRandom(seed);
  const t = Float64Array.from({ length: m }, (_, i) => 0.1 * i);
  const y = Float64Array.from(t, (ti) => 2.5 * Math.exp(-ti / 1.3) + 0.4 + sigma * rng.normal());
  return { t, y };
}
const decayModel = (p: Float64Array, ti: number) => p[0] * Math.exp(-ti / p[1]) + p[2];
const decayGradient = (p: Float64Array, ti: number, out: Float64Array) => {
  const e = Math.exp(-ti / p[1]);
  out[0] = e;
  out[1] = (p[0] * e * ti) / (p[1] * p[1]);
  out[2] = 1;
};

function sinesData(seed: number) {
  const rng = seededRandom(seed);
  const t = Float64Array.from({ length: 200 }, (_, i) => 0.05 * i);
  const y = Float64Array.from(
    t,
    (ti) => 1.0 * Math.exp(-0.3 * ti) * Math.sin(2.0 * ti + 0.3) + 0.6 * Math.exp(-0.1 * ti) * Math.sin(3.7 * ti + 1.1) + 0.01 * rng.normal(),
  );
  return { t, y };
}
const sinesModel = (p: Float64Array, ti: number) =>
  p[0] * Math.exp(-p[1] * ti) * Math.sin(p[2] * ti + p[3]) + p[4] * Math.exp(-p[5] * ti) * Math.sin(p[6] * ti + p[7]);
const sinesStart = [0.9, 0.25, 2.05, 0.2, 0.5, 0.12, 3.65, 1.0];

describe('Levenberg-Marquardt on problems with known minima', () => {
  it('finds the Rosenbrock minimum (1, 1) with ssr 0 (Rosenbrock, Comput. J. 3, 175 (1960))', () => {
    const res = fitLeastSquares(rosenbrock, { ftol: 1e-15, xtol: 1e-15 });
    expect(res.status).toBe('converged');
    expect(res.params[0]).toBeCloseTo(1, 10); // exact minimum, tolerance 1e-10
    expect(res.params[1]).toBeCloseTo(1, 10);
    expect(res.ssr).toBeLessThan(1e-20);
  });

  it('fits NIST StRD Misra1a from start 1 to the certified values', () => {
    // NIST Statistical Reference Datasets, nonlinear regression, Misra1a (lower difficulty):
    // y = b1 (1 - exp(-b2 x)). Data, start values (500, 1e-4) and certified values from memory:
    // b1 = 2.3894212918E+02, b2 = 5.5015643181E-04, residual sum of squares 1.2455138894E-01.
    const x = Float64Array.from([77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0]);
    const y = Float64Array.from([10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78]);
    const problem = curveProblem(x, y, (p, xi) => p[0] * (1 - Math.exp(-p[1] * xi)), [500, 1e-4], (p, xi, out) => {
      const e = Math.exp(-p[1] * xi);
      out[0] = 1 - e;
      out[1] = p[0] * xi * e;
    });
    const res = fitLeastSquares(problem, { ftol: 1e-15, xtol: 1e-15 });
    expect(res.status).toBe('converged');
    // NIST asks for agreement in about 6 significant digits; tolerance 1e-7 relative.
    expect(Math.abs(res.params[0] / 2.3894212918e2 - 1)).toBeLessThan(1e-7);
    expect(Math.abs(res.params[1] / 5.5015643181e-4 - 1)).toBeLessThan(1e-7);
    expect(Math.abs(res.ssr / 1.2455138894e-1 - 1)).toBeLessThan(1e-7);
  });
});

describe.skipIf(!HAVE_SCIPY)('Levenberg-Marquardt against scipy.optimize.least_squares (skipped: /usr/bin/python3 has no scipy)', () => {
  const program = `
import json, sys
import numpy as np
from scipy.optimize import least_squares
d = json.load(sys.stdin)
t = np.array(d['t']); y = np.array(d['y'])
if d['model'] == 'decay':
    f = lambda p: p[0]*np.exp(-t/p[1]) + p[2] - y
else:
    f = lambda p: (p[0]*np.exp(-p[1]*t)*np.sin(p[2]*t+p[3]) + p[4]*np.exp(-p[5]*t)*np.sin(p[6]*t+p[7])) - y
r = least_squares(f, np.array(d['x0']), method='lm', ftol=1e-15, xtol=1e-15, gtol=1e-15, max_nfev=10000)
J = r.jac
cov = np.linalg.inv(J.T @ J)
print(json.dumps({'x': r.x.tolist(), 'ssr': float(r.fun @ r.fun), 'cov': cov.ravel().tolist()}))
`;

  it('exponential decay A exp(-t/tau) + c: same minimum and covariance as scipy (lm, MINPACK)', () => {
    const { t, y } = decayData(7);
    const ref = runPython<{ x: number[]; ssr: number; cov: number[] }>(program, { model: 'decay', t: [...t], y: [...y], x0: [1, 1, 0] });
    const res = fitLeastSquares(curveProblem(t, y, decayModel, [1, 1, 0], decayGradient), { ftol: 1e-15, xtol: 1e-15 });
    expect(res.status).toBe('converged');
    // Tolerances: 1e-8 relative on parameters and ssr, 1e-6 on the covariance (finite differences in scipy's J).
    for (let j = 0; j < 3; j++) expect(Math.abs(res.params[j] - ref.x[j])).toBeLessThan(1e-8 * Math.max(1, Math.abs(ref.x[j])));
    expect(Math.abs(res.ssr / ref.ssr - 1)).toBeLessThan(1e-8);
    for (let j = 0; j < 9; j++) expect(Math.abs(res.covariance![j] - ref.cov[j])).toBeLessThan(1e-6 * Math.abs(ref.cov[0]) + 1e-6 * Math.abs(ref.cov[j]));
  });

  it('sum of two damped sines with a finite-difference Jacobian: same minimum as scipy', () => {
    const { t, y } = sinesData(11);
    const ref = runPython<{ x: number[]; ssr: number }>(program, { model: 'sines', t: [...t], y: [...y], x0: sinesStart });
    for (const differences of ['forward', 'central'] as const) {
      const res = fitLeastSquares(curveProblem(t, y, sinesModel, sinesStart), { differences, ftol: 1e-14, xtol: 1e-14 });
      expect(res.status).toBe('converged');
      expect(res.differenceEvaluations).toBeGreaterThan(0);
      // Tolerance 1e-6 absolute on parameters of order 1 and 1e-8 relative on ssr (numerical Jacobians).
      for (let j = 0; j < 8; j++) expect(Math.abs(res.params[j] - ref.x[j])).toBeLessThan(1e-6);
      expect(Math.abs(res.ssr / ref.ssr - 1)).toBeLessThan(1e-8);
    }
  });
});

describe('covariance', () => {
  it('equals the analytic (X^T X)^-1 of a linear model (inverted independently with ml-matrix)', () => {
    // y = p0 + p1 t + p2 t^2: residuals are linear in p, so J = X exactly and cov = (X^T X)^-1
    // (Gauss-Markov; common practice, no source). ml-matrix's LU inverse is the independent reference.
    const { t, y } = decayData(3, 30);
    const problem = curveProblem(t, y, (p, ti) => p[0] + p[1] * ti + p[2] * ti * ti, [0, 0, 0]);
    const res = fitLeastSquares(problem);
    const X = new Matrix([...t].map((ti) => [1, ti, ti * ti]));
    const expected = inverse(X.transpose().mmul(X));
    for (let a = 0; a < 3; a++) {
      for (let b = 0; b < 3; b++) {
        const e = expected.get(a, b);
        // Tolerance 1e-6 relative to the diagonal scale: forward-difference Jacobian of a linear model.
        expect(Math.abs(res.covariance![a * 3 + b] - e)).toBeLessThan(1e-6 * Math.sqrt(expected.get(a, a) * expected.get(b, b)));
      }
    }
  });

  it('is null when two parameters enter only through their sum', () => {
    const { t, y } = decayData(4, 20);
    const problem = curveProblem(t, y, (p, ti) => (p[0] + p[1]) * Math.exp(-ti), [1, 1]);
    const res = fitLeastSquares(problem);
    expect(res.covariance).toBeNull();
    expect(['converged', 'stalled']).toContain(res.status);
  });

  it('error bars cover the truth in about 68 % of seeded synthetic repeats', () => {
    // For Gaussian noise the 1-sigma interval p +- sqrt(C_jj s^2), s^2 = ssr / (m - n), covers the
    // truth with probability 0.683 (common practice, no source). 300 repeats x 3 parameters;
    // binomial sd of the fraction = sqrt(0.683 * 0.317 / 900) = 0.016, band +- 0.05 (3 sd).
    let covered = 0;
    let total = 0;
    const truth = [2.5, 1.3, 0.4];
    for (let seed = 1; seed <= 300; seed++) {
      const { t, y } = decayData(1000 + seed, 40, 0.05);
      const res = fitLeastSquares(curveProblem(t, y, decayModel, [2, 1, 0], decayGradient));
      const s2 = res.ssr / (t.length - 3);
      for (let j = 0; j < 3; j++) {
        const err = Math.sqrt(res.covariance![j * 3 + j] * s2);
        if (Math.abs(res.params[j] - truth[j]) <= err) covered++;
        total++;
      }
    }
    const fraction = covered / total;
    expect(fraction).toBeGreaterThan(0.683 - 0.05);
    expect(fraction).toBeLessThan(0.683 + 0.05);
  });
});

describe('bounds', () => {
  it('keeps every evaluation inside the bounds and reports a parameter stuck at a bound', () => {
    const { t, y } = decayData(5);
    const seen: number[][] = [];
    const base = curveProblem(t, y, decayModel, [2, 1, 0.2]);
    // Unconstrained c = 0.4; bound c <= 0.3 must hold; tau in [1.0, 2.0].
    const problem: LeastSquaresProblem = {
      ...base,
      lower: [-Infinity, 1.0, -Infinity],
      upper: [Infinity, 2.0, 0.3],
      residuals(p, out) {
        seen.push([...p]);
        base.residuals(p, out);
      },
    };
    for (const differences of ['forward', 'central'] as const) {
      seen.length = 0;
      const res = fitLeastSquares(problem, { differences });
      expect(res.status).not.toBe('failed');
      for (const p of seen) {
        expect(p[1]).toBeGreaterThanOrEqual(1.0);
        expect(p[1]).toBeLessThanOrEqual(2.0);
        expect(p[2]).toBeLessThanOrEqual(0.3);
      }
      expect(res.params[2]).toBeCloseTo(0.3, 5); // at the bound (1e-5)
      expect(res.atBound).toEqual([null, null, 'upper']);
      expect(res.covariance).not.toBeNull();
    }
  });

  it('gives the same minimum as the unbounded fit when the bounds are not active', () => {
    const { t, y } = decayData(6);
    const free = fitLeastSquares(curveProblem(t, y, decayModel, [2, 1, 0], decayGradient), { ftol: 1e-14 });
    const bounded = fitLeastSquares(
      { ...curveProblem(t, y, decayModel, [2, 1, 0], decayGradient), lower: [0, 0.1, -5], upper: [10, 10, 5] },
      { ftol: 1e-14 },
    );
    // Tolerance 1e-7: the same problem in other coordinates.
    for (let j = 0; j < 3; j++) expect(Math.abs(bounded.params[j] - free.params[j])).toBeLessThan(1e-7);
    for (let j = 0; j < 9; j++) expect(Math.abs(bounded.covariance![j] - free.covariance![j])).toBeLessThan(1e-6 * Math.abs(free.covariance![0]));
  });

  it('refuses a start outside its bounds and inconsistent bounds with InputError', () => {
    const p = curveProblem(...Object.values(decayData(1)) as [Float64Array, Float64Array], decayModel, [2, 1, 0]);
    expect(() => fitLeastSquares({ ...p, lower: [0, 2, 0] })).toThrow(InputError);
    expect(() => fitLeastSquares({ ...p, lower: [0, 0], upper: [1, 1, 1] })).toThrow(/lower bounds have 2 entries/);
    expect(() => fitLeastSquares({ ...p, lower: [1, 1, 1], upper: [0, 2, 2] })).toThrow(/not below/);
  });
});

describe('status instead of exceptions', () => {
  it('NaN residuals at the start end with status failed and say where', () => {
    const res = fitLeastSquares({ nResiduals: 3, initial: [1], residuals: (p, out) => out.set([1, NaN, p[0]]) });
    expect(res.status).toBe('failed');
    expect(res.message).toMatch(/not finite.*residual 1.*start/);
  });

  it('NaN everywhere away from the start ends with status failed, not an exception', () => {
    const res = fitLeastSquares({
      nResiduals: 2,
      initial: [1, 1],
      residuals: (p, out) => {
        const ok = p[0] === 1 && p[1] === 1;
        out[0] = ok ? 3 : NaN;
        out[1] = ok ? 4 : NaN;
      },
    });
    expect(res.status).toBe('failed');
    expect(res.message).toMatch(/not finite/);
  });

  it('a trial step into a NaN region is rejected and the fit still converges', () => {
    // sqrt(p) is NaN for p < 0; the minimum p = 0.25 of (sqrt(p) - 0.5)^2 + ... lies near that edge.
    const res = fitLeastSquares({
      nResiduals: 2,
      initial: [4],
      residuals: (p, out) => {
        out[0] = Math.sqrt(p[0]) - 0.5;
        out[1] = 0.1 * (p[0] - 0.25);
      },
    });
    expect(res.status).toBe('converged');
    expect(res.params[0]).toBeCloseTo(0.25, 6);
  });

  it('stops with max-iterations when allowed too few iterations', () => {
    const res = fitLeastSquares(rosenbrock, { maxIterations: 2 });
    expect(res.status).toBe('max-iterations');
    expect(res.iterations).toBe(2);
    expect(res.message).toMatch(/maxIterations/);
  });

  it('refuses fewer residuals than parameters and bad options with InputError', () => {
    expect(() => fitLeastSquares({ nResiduals: 1, initial: [1, 2], residuals: () => {} })).toThrow(InputError);
    expect(() => fitLeastSquares(rosenbrock, { ftol: -1 })).toThrow(/ftol/);
  });
});

describe('finite-difference Jacobian', () => {
  it('forward and central differences agree with the analytic Jacobian at the solution', () => {
    const { t, y } = decayData(8);
    const analytic = fitLeastSquares(curveProblem(t, y, decayModel, [2, 1, 0], decayGradient));
    for (const [differences, tol] of [['forward', 1e-6], ['central', 1e-9]] as const) {
      const numeric = fitLeastSquares(curveProblem(t, y, decayModel, [2, 1, 0]), { differences });
      // Tolerance: forward O(sqrt(eps)) ~ 1e-8 relative, central O(eps^(2/3)) ~ 1e-11, with margin.
      let worst = 0;
      for (let i = 0; i < analytic.jacobian.length; i++) worst = Math.max(worst, Math.abs(numeric.jacobian[i] - analytic.jacobian[i]));
      expect(worst).toBeLessThan(tol * 10);
      for (let j = 0; j < 3; j++) expect(Math.abs(numeric.params[j] - analytic.params[j])).toBeLessThan(1e-7);
    }
  });
});

describe('multi-start', () => {
  it('escapes the local minimum of a frequency fit that a single start falls into', () => {
    // y = sin(5 t): from omega = 1 the fit stays in a local minimum (the misfit surface in omega
    // oscillates); random starts in [0.5, 8] find omega = 5 (exact by construction).
    const t = Float64Array.from({ length: 100 }, (_, i) => 0.1 * i);
    const y = Float64Array.from(t, (ti) => Math.sin(5 * ti));
    const problem: LeastSquaresProblem = {
      ...curveProblem(t, y, (p, ti) => Math.sin(p[0] * ti), [1]),
      lower: [0.5],
      upper: [8],
    };
    const single = fitLeastSquares(problem);
    expect(Math.abs(single.params[0] - 5)).toBeGreaterThan(0.5);
    const multi = fitLeastSquaresMultiStart(problem, { starts: 24, seed: 42 });
    expect(multi.params[0]).toBeCloseTo(5, 6);
    expect(multi.ssr).toBeLessThan(1e-12);
    expect(multi.startSummaries).toHaveLength(24);
    // Same seed, same result.
    expect(fitLeastSquaresMultiStart(problem, { starts: 24, seed: 42 }).bestStart).toBe(multi.bestStart);
  });
});
