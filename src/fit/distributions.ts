/**
 * Special functions and distributions for significance tests between fits.
 *
 * - ln Gamma(x), x > 0: the Stirling series with Bernoulli-number coefficients, Abramowitz and
 *   Stegun, Handbook of Mathematical Functions (1964), eq. 6.1.40, applied at x + s >= 10 after the
 *   recurrence Gamma(x + 1) = x Gamma(x) (eq. 6.1.15); the truncation error is below 1e-15.
 * - The regularised incomplete beta function I_x(a, b) by its continued fraction (A&S eq. 26.5.8)
 *   evaluated with the modified Lentz method, as in Press, Teukolsky, Vetterling and Flannery,
 *   Numerical Recipes, 3rd ed. (2007), section 6.4, using the symmetry I_x(a, b) = 1 - I_{1-x}(b, a)
 *   for x > (a + 1)/(a + b + 2) where the fraction converges fastest.
 * - The F distribution: P(F <= f) = I_{d1 f/(d1 f + d2)}(d1/2, d2/2) (A&S eq. 26.6.2), and its
 *   upper tail (the p-value of an F-test) computed directly as I_{d2/(d2 + d1 f)}(d2/2, d1/2) to
 *   keep small p-values accurate.
 * (Equation numbers of Abramowitz and Stegun from memory; the functions are checked against
 * scipy.special and scipy.stats in test/fit-statistics.test.ts.)
 */
import { ComputationError } from '../core/errors';

const HALF_LOG_TWO_PI = 0.9189385332046728;

/** ln Gamma(x) for x > 0 (NaN for x <= 0 or NaN). Relative accuracy about 1e-15. */
export function logGamma(x: number): number {
  if (!(x > 0)) return NaN;
  if (x === Infinity) return Infinity;
  let shift = 0;
  let z = x;
  // ln(x (x+1) ... (x+s-1)) accumulated as a product, rescaled to avoid overflow.
  let product = 1;
  while (z < 10) {
    product *= z;
    z += 1;
    if (product > 1e250) {
      shift += Math.log(product);
      product = 1;
    }
  }
  shift += Math.log(product);
  const inv = 1 / z;
  const inv2 = inv * inv;
  // Stirling series: B_2k / (2k (2k - 1) z^(2k-1)), k = 1..7.
  const series =
    inv *
    (1 / 12 +
      inv2 * (-1 / 360 + inv2 * (1 / 1260 + inv2 * (-1 / 1680 + inv2 * (1 / 1188 + inv2 * (-691 / 360360 + inv2 * (1 / 156)))))));
  return (z - 0.5) * Math.log(z) - z + HALF_LOG_TWO_PI + series - shift;
}

/** ln B(a, b) = ln Gamma(a) + ln Gamma(b) - ln Gamma(a + b). */
export function logBeta(a: number, b: number): number {
  return logGamma(a) + logGamma(b) - logGamma(a + b);
}

/** Continued fraction of the incomplete beta function, modified Lentz method (NR 3rd ed., 6.4). */
function betaContinuedFraction(a: number, b: number, x: number): number {
  const tiny = 1e-300;
  const maxIterations = 10000;
  const qab = a + b;
  const qap = a + 1;
  const qam = a - 1;
  let c = 1;
  let d = 1 - (qab * x) / qap;
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= maxIterations; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < 1e-15) return h;
  }
  throw new ComputationError(`incomplete beta continued fraction did not converge for a=${a}, b=${b}, x=${x}`);
}

/**
 * Regularised incomplete beta function I_x(a, b) = B(x; a, b) / B(a, b), for a, b > 0 and
 * 0 <= x <= 1. Returns NaN for arguments outside that domain.
 */
export function regularizedIncompleteBeta(x: number, a: number, b: number): number {
  if (!(a > 0) || !(b > 0) || !(x >= 0) || !(x <= 1)) return NaN;
  if (x === 0) return 0;
  if (x === 1) return 1;
  const logFront = a * Math.log(x) + b * Math.log1p(-x) - logBeta(a, b);
  if (x < (a + 1) / (a + b + 2)) return (Math.exp(logFront) * betaContinuedFraction(a, b, x)) / a;
  return 1 - (Math.exp(logFront) * betaContinuedFraction(b, a, 1 - x)) / b;
}

/** Upper tail 1 - I_x(a, b) = I_{1-x}(b, a), computed without cancellation. */
function complementedIncompleteBeta(x: number, a: number, b: number): number {
  return regularizedIncompleteBeta(1 - x, b, a);
}

/** P(F <= f) for the F distribution with d1, d2 degrees of freedom (0 for f <= 0). */
export function fDistributionCdf(f: number, d1: number, d2: number): number {
  if (!(d1 > 0) || !(d2 > 0) || Number.isNaN(f)) return NaN;
  if (f <= 0) return 0;
  if (f === Infinity) return 1;
  return regularizedIncompleteBeta((d1 * f) / (d1 * f + d2), d1 / 2, d2 / 2);
}

/** P(F > f), the p-value of an observed F statistic f (1 for f <= 0). */
export function fDistributionSurvival(f: number, d1: number, d2: number): number {
  if (!(d1 > 0) || !(d2 > 0) || Number.isNaN(f)) return NaN;
  if (f <= 0) return 1;
  if (f === Infinity) return 0;
  const x = d2 / (d2 + d1 * f);
  return regularizedIncompleteBeta(x, d2 / 2, d1 / 2);
}

/** Exposed for tests: 1 - I_x(a, b) without cancellation. */
export const incompleteBetaUpper = complementedIncompleteBeta;
