import { describe, it, expect } from 'vitest';
import {
  fTestNested,
  fitStatistics,
  fQuantileUpper,
  hamiltonCriticalRatio,
  hamiltonTest,
  independentPoints,
} from '../src/fit/statistics';
import { fDistributionCdf, fDistributionSurvival, logGamma, regularizedIncompleteBeta } from '../src/fit/distributions';
import { fitLeastSquares, type LeastSquaresProblem } from '../src/fit/levenberg-marquardt';
import { seededRandom } from '../src/fit/random';
import { InputError } from '../src/core/errors';
import { HAVE_SCIPY, runPython } from './fit-python-helper';

/** Straight-line fit y = a + b t to seeded data; returns the fit and the data. */
function lineFit(seed: number, m: number, sigma: number, t0 = 0) {
  const rng = seededRandom(seed);
  const t = Float64Array.from({ length: m }, (_, i) => t0 + i / m);
  const y = Float64Array.from(t, (ti) => 1 + 2 * ti + sigma * rng.normal());
  const problem: LeastSquaresProblem = {
    nResiduals: m,
    initial: [0, 0],
    residuals: (p, out) => {
      for (let i = 0; i < m; i++) out[i] = p[0] + p[1] * t[i] - y[i];
    },
    jacobian: (_p, out) => {
      for (let i = 0; i < m; i++) {
        out[2 * i] = 1;
        out[2 * i + 1] = t[i];
      }
    },
  };
  return { fit: fitLeastSquares(problem), y };
}

describe('independent points (Stern, Phys. Rev. B 48, 9825 (1993))', () => {
  it('is 2 Dk DR / pi + 2 by default and 2 Dk DR / pi without the end correction', () => {
    // k 3-14, R 1-3.2: 2 * 11 * 2.2 / pi = 15.4056..., the formula of the paper.
    expect(independentPoints(3, 14, 1, 3.2)).toBeCloseTo((2 * 11 * 2.2) / Math.PI + 2, 12);
    expect(independentPoints(3, 14, 1, 3.2, false)).toBeCloseTo((2 * 11 * 2.2) / Math.PI, 12);
  });
  it('refuses empty ranges', () => {
    expect(() => independentPoints(14, 3, 1, 3)).toThrow(InputError);
    expect(() => independentPoints(3, 14, 2, 2)).toThrow(/R range/);
  });
});

describe('fit statistics', () => {
  it('reduced chi-square averages 1 for white noise of the stated size when N_ind = N_pts', () => {
    // E[chi2] = N - nu for Gaussian residuals of a linear model (common practice, no source).
    // 400 seeds: the mean has sd sqrt(2/(N-nu))/sqrt(400) = 0.0073 for N = 40; tolerance 0.025.
    let sum = 0;
    for (let seed = 1; seed <= 400; seed++) {
      const { fit, y } = lineFit(seed, 40, 0.1);
      const s = fitStatistics({ residuals: fit.residuals, data: y, noise: 0.1, nIndependent: 40, covariance: fit.covariance, names: ['a', 'b'] });
      sum += s.reducedChiSquare;
    }
    expect(Math.abs(sum / 400 - 1)).toBeLessThan(0.025);
  });

  it('standard errors are the textbook sqrt(C_jj ssr / (N - nu)) when N_ind = N_pts', () => {
    // Bevington and Robinson (2003), eq. 6.23 (number from memory) with the variance estimated from the residuals.
    const { fit, y } = lineFit(3, 50, 0.2);
    const s = fitStatistics({ residuals: fit.residuals, data: y, noise: 0.05, nIndependent: 50, covariance: fit.covariance, names: ['a', 'b'] });
    for (let j = 0; j < 2; j++) {
      const textbook = Math.sqrt((fit.covariance![j * 2 + j] * fit.ssr) / 48);
      expect(Math.abs(s.standardErrors[j] / textbook - 1)).toBeLessThan(1e-12);
    }
  });

  it('standard errors do not depend on the stated noise and grow as N_ind shrinks', () => {
    const { fit, y } = lineFit(4, 50, 0.2);
    const base = { residuals: fit.residuals, data: y, covariance: fit.covariance, names: ['a', 'b'] };
    const a = fitStatistics({ ...base, noise: 0.01, nIndependent: 12 });
    const b = fitStatistics({ ...base, noise: 3.0, nIndependent: 12 });
    const full = fitStatistics({ ...base, noise: 0.2, nIndependent: 50 });
    for (let j = 0; j < 2; j++) {
      expect(Math.abs(a.standardErrors[j] / b.standardErrors[j] - 1)).toBeLessThan(1e-12);
      // Ratio sqrt((N_pts - nu)/(N_ind - nu)) = sqrt(48/10), from the formulas in the module header.
      expect(a.standardErrors[j] / full.standardErrors[j]).toBeCloseTo(Math.sqrt(48 / 10), 10);
    }
    expect(a.chiSquare / b.chiSquare).toBeCloseTo((3.0 / 0.01) ** 2, 6);
  });

  it('per-point noise equal everywhere gives the same numbers as one epsilon', () => {
    const { fit, y } = lineFit(5, 30, 0.1);
    const base = { residuals: fit.residuals, data: y, covariance: fit.covariance, names: ['a', 'b'], nIndependent: 20 };
    const one = fitStatistics({ ...base, noise: 0.1 });
    const each = fitStatistics({ ...base, noise: new Float64Array(30).fill(0.1) });
    expect(each.chiSquare).toBeCloseTo(one.chiSquare, 10);
    expect(each.standardErrors[1]).toBeCloseTo(one.standardErrors[1], 12);
  });

  it('R-factor is sum r^2 / sum y^2', () => {
    const { fit, y } = lineFit(6, 30, 0.1);
    const s = fitStatistics({ residuals: fit.residuals, data: y, noise: 0.1, nIndependent: 20, covariance: fit.covariance, names: ['a', 'b'] });
    let r2 = 0;
    let d2 = 0;
    for (let i = 0; i < 30; i++) {
      r2 += fit.residuals[i] ** 2;
      d2 += y[i] ** 2;
    }
    expect(s.rFactor).toBeCloseTo(r2 / d2, 14);
  });

  it('AIC and BIC differences match -2 ln L + penalty of the Gaussian likelihood (Akaike 1974; Schwarz 1978)', () => {
    // -2 ln L_max = N ln(2 pi sigma_hat^2) + N with sigma_hat^2 = chi2 / N for N observations:
    // the constant N ln(2 pi) + N cancels in differences between fits of the same data.
    const { fit: fit2, y } = lineFit(7, 40, 0.1);
    const residual1 = Float64Array.from(y, (yi) => yi - y.reduce((s, v) => s + v, 0) / y.length); // constant model
    const N = 25;
    const s2 = fitStatistics({ residuals: fit2.residuals, data: y, noise: 0.1, nIndependent: N, covariance: fit2.covariance, names: ['a', 'b'] });
    const s1 = fitStatistics({ residuals: residual1, data: y, noise: 0.1, nIndependent: N, covariance: new Float64Array([1]), names: ['a'] });
    const minus2LogL = (chi2: number) => N * Math.log((2 * Math.PI * chi2) / N) + N;
    expect(s2.aic - s1.aic).toBeCloseTo(minus2LogL(s2.chiSquare) + 4 - (minus2LogL(s1.chiSquare) + 2), 10);
    expect(s2.bic - s1.bic).toBeCloseTo(minus2LogL(s2.chiSquare) + 2 * Math.log(N) - (minus2LogL(s1.chiSquare) + Math.log(N)), 10);
  });

  it('warns about correlations above 0.9, parameters at a bound and more parameters than independent points', () => {
    // A line far from t = 0: intercept and slope are strongly anticorrelated (common practice, no source).
    const { fit, y } = lineFit(8, 40, 0.1, 10);
    const s = fitStatistics({
      residuals: fit.residuals,
      data: y,
      noise: 0.1,
      nIndependent: 1.5,
      covariance: fit.covariance,
      names: ['a', 'b'],
      atBound: [null, 'upper'],
    });
    const codes = s.warnings.map((w) => w.code);
    expect(codes).toContain('high-correlation');
    expect(codes).toContain('at-bound');
    expect(codes).toContain('underdetermined');
    expect(s.correlation![1]).toBeLessThan(-0.9);
    expect(s.warnings.find((w) => w.code === 'at-bound')!.parameters).toEqual(['b']);
    expect(s.reducedChiSquare).toBeNaN();
  });

  it('warns when there is no covariance', () => {
    const s = fitStatistics({ residuals: new Float64Array([1, 2, 3]), data: new Float64Array([1, 1, 1]), noise: 1, nIndependent: 3, covariance: null, names: ['a'] });
    expect(s.warnings.map((w) => w.code)).toEqual(['no-covariance']);
    expect(s.standardErrors[0]).toBeNaN();
  });

  it('refuses inconsistent input', () => {
    const r = new Float64Array(3);
    expect(() => fitStatistics({ residuals: r, data: new Float64Array(2), noise: 1, nIndependent: 3, covariance: null, names: [] })).toThrow(InputError);
    expect(() => fitStatistics({ residuals: r, data: r, noise: 0, nIndependent: 3, covariance: null, names: [] })).toThrow(/noise/);
    expect(() => fitStatistics({ residuals: r, data: r, noise: 1, nIndependent: 3, covariance: new Float64Array(3), names: ['a'] })).toThrow(/covariance/);
  });
});

describe('special functions', () => {
  it('ln Gamma of integers and half-integers: ln((n-1)!) and Gamma(1/2) = sqrt(pi) (A&S 6.1.6, 6.1.8; equation numbers from memory)', () => {
    let factorial = 1;
    for (let n = 1; n <= 30; n++) {
      if (n > 1) factorial *= n - 1;
      expect(Math.abs(logGamma(n) - Math.log(factorial))).toBeLessThan(1e-13 * Math.max(1, Math.log(factorial)));
    }
    expect(logGamma(0.5)).toBeCloseTo(0.5 * Math.log(Math.PI), 14);
    expect(logGamma(1.5)).toBeCloseTo(Math.log(0.5 * Math.sqrt(Math.PI)), 14);
    expect(logGamma(0)).toBeNaN();
  });

  it('I_x(a, b) has closed forms I_x(a, 1) = x^a and I_x(1, b) = 1 - (1-x)^b (direct integration of the beta density)', () => {
    for (const x of [0.01, 0.3, 0.77, 0.999]) {
      for (const a of [0.5, 2, 7.5]) {
        expect(regularizedIncompleteBeta(x, a, 1)).toBeCloseTo(x ** a, 13);
        expect(regularizedIncompleteBeta(x, 1, a)).toBeCloseTo(1 - (1 - x) ** a, 13);
      }
    }
    expect(regularizedIncompleteBeta(0, 2, 3)).toBe(0);
    expect(regularizedIncompleteBeta(1, 2, 3)).toBe(1);
    expect(regularizedIncompleteBeta(1.5, 2, 3)).toBeNaN();
  });
});

describe.skipIf(!HAVE_SCIPY)('special functions and tests against scipy (skipped: /usr/bin/python3 has no scipy)', () => {
  it('regularised incomplete beta and ln Gamma agree with scipy.special.betainc / gammaln', () => {
    const grid: [number, number, number][] = [];
    for (const a of [0.1, 0.5, 1, 2.5, 7, 30, 250]) {
      for (const b of [0.2, 1, 3.5, 12, 80, 1000]) {
        for (const x of [1e-6, 0.01, 0.2, 0.5, 0.8, 0.97, 0.999999]) grid.push([x, a, b]);
      }
    }
    const ref = runPython<{ beta: number[]; lg: number[] }>(
      `
import json, sys
from scipy.special import betainc, gammaln
g = json.load(sys.stdin)
print(json.dumps({'beta': [float(betainc(a, b, x)) for x, a, b in g], 'lg': [float(gammaln(a)) for x, a, b in g]}))
`,
      grid,
    );
    grid.forEach(([x, a, b], i) => {
      const ours = regularizedIncompleteBeta(x, a, b);
      // Tolerance 1e-12 absolute plus 1e-10 relative (both sides accurate to ~1e-14).
      expect(Math.abs(ours - ref.beta[i])).toBeLessThan(1e-12 + 1e-10 * ref.beta[i]);
      expect(Math.abs(logGamma(a) - ref.lg[i])).toBeLessThan(1e-13 * Math.max(1, Math.abs(ref.lg[i])));
    });
  });

  it('F distribution, F-test p-values and Hamilton critical ratios agree with scipy.stats.f', () => {
    const cases = [
      [0.5, 1, 10],
      [2.3, 2, 7.4],
      [4.1, 3, 15.2],
      [12, 1, 5],
      [40, 4, 30],
    ];
    const ref = runPython<{ cdf: number[]; sf: number[]; isf: number[] }>(
      `
import json, sys
from scipy.stats import f
c = json.load(sys.stdin)
print(json.dumps({'cdf': [float(f.cdf(x, a, b)) for x, a, b in c], 'sf': [float(f.sf(x, a, b)) for x, a, b in c],
                  'isf': [float(f.isf(0.05, a, b)) for x, a, b in c]}))
`,
      cases,
    );
    cases.forEach(([x, d1, d2], i) => {
      expect(Math.abs(fDistributionCdf(x, d1, d2) - ref.cdf[i])).toBeLessThan(1e-12);
      expect(Math.abs(fDistributionSurvival(x, d1, d2) / ref.sf[i] - 1)).toBeLessThan(1e-9);
      expect(Math.abs(fQuantileUpper(0.05, d1, d2) / ref.isf[i] - 1)).toBeLessThan(1e-9);
      // Hamilton (1965): R_{b, n-m, alpha} = sqrt(b F_{b,n-m,alpha}/(n-m) + 1).
      expect(hamiltonCriticalRatio(d1, d2, 0.05)).toBeCloseTo(Math.sqrt((d1 * ref.isf[i]) / d2 + 1), 9);
    });
  });
});

describe('nested-model tests', () => {
  it("Hamilton's test and the F-test give the same p-value for the same fits", () => {
    // R-factors share the denominator sum y^2, so R0/R1 = sqrt(chi2_0/chi2_1) and the two tests coincide.
    const f = fTestNested(30, 18, 3, 5, 17.4);
    const h = hamiltonTest(0.030, 0.018, 3, 5, 17.4);
    expect(h.ratio).toBeCloseTo(Math.sqrt(30 / 18), 14);
    expect(h.f).toBeCloseTo(f.f, 12);
    expect(h.pValue).toBeCloseTo(f.pValue, 14);
    expect(f.d1).toBe(2);
    expect(f.d2).toBeCloseTo(12.4, 14);
  });

  it('a ratio exactly at the critical value has p = alpha', () => {
    const critical = hamiltonCriticalRatio(2, 12.4, 0.05);
    const h = hamiltonTest(critical * critical, 1, 3, 5, 17.4);
    expect(h.pValue).toBeCloseTo(0.05, 9);
  });

  it('refuses non-nested or saturated comparisons', () => {
    expect(() => fTestNested(1, 1, 5, 5, 20)).toThrow(InputError);
    expect(() => hamiltonTest(1, 1, 3, 10, 9)).toThrow(/degrees of freedom/);
  });
});
