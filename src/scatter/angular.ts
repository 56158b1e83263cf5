/**
 * Angular-momentum algebra for partial-wave scattering: Wigner 3j symbols (Racah's closed formula,
 * Racah, Phys. Rev. 62, 438 (1942); as in Edmonds, Angular Momentum in Quantum Mechanics, eq. 3.7.3),
 * Gaunt integrals of three spherical harmonics, Legendre polynomials and complex spherical harmonics
 * with the Condon-Shortley phase (Edmonds eq. 2.5.29).
 */

const LOG_FACTORIAL: Float64Array = (() => {
  const t = new Float64Array(400);
  for (let n = 2; n < t.length; n++) t[n] = t[n - 1] + Math.log(n);
  return t;
})();

function logFactorial(n: number): number {
  if (n < 0) return NaN;
  if (n < LOG_FACTORIAL.length) return LOG_FACTORIAL[n];
  throw new RangeError(`logFactorial(${n}) beyond the table`);
}

/**
 * Wigner 3j symbol (j1 j2 j3; m1 m2 m3) for integer arguments; 0 when the selection rules fail.
 * Valid for j up to about 120 (factorial table of 400 entries).
 */
export function wigner3j(j1: number, j2: number, j3: number, m1: number, m2: number, m3: number): number {
  if (m1 + m2 + m3 !== 0) return 0;
  if (j3 < Math.abs(j1 - j2) || j3 > j1 + j2) return 0;
  if (Math.abs(m1) > j1 || Math.abs(m2) > j2 || Math.abs(m3) > j3) return 0;
  const logTriangle =
    logFactorial(j1 + j2 - j3) + logFactorial(j1 - j2 + j3) + logFactorial(-j1 + j2 + j3) - logFactorial(j1 + j2 + j3 + 1);
  const logPre =
    0.5 *
    (logTriangle +
      logFactorial(j1 + m1) + logFactorial(j1 - m1) + logFactorial(j2 + m2) + logFactorial(j2 - m2) + logFactorial(j3 + m3) + logFactorial(j3 - m3));
  const tMin = Math.max(0, j2 - j3 - m1, j1 - j3 + m2);
  const tMax = Math.min(j1 + j2 - j3, j1 - m1, j2 + m2);
  let sum = 0;
  for (let t = tMin; t <= tMax; t++) {
    const logDen =
      logFactorial(t) + logFactorial(j3 - j2 + t + m1) + logFactorial(j3 - j1 + t - m2) + logFactorial(j1 + j2 - j3 - t) + logFactorial(j1 - t - m1) + logFactorial(j2 - t + m2);
    const term = Math.exp(logPre - logDen);
    sum += t % 2 === 0 ? term : -term;
  }
  const sign = (j1 - j2 - m3) % 2 === 0 ? 1 : -1;
  return sign * sum;
}

/**
 * Gaunt integral ∫ Y_{l1 m1} Y_{l2 m2} Y_{l3 m3} dΩ (all unconjugated)
 * = sqrt((2l1+1)(2l2+1)(2l3+1) / 4π) (l1 l2 l3; 0 0 0)(l1 l2 l3; m1 m2 m3).
 */
export function gaunt(l1: number, m1: number, l2: number, m2: number, l3: number, m3: number): number {
  if (m1 + m2 + m3 !== 0 || (l1 + l2 + l3) % 2 !== 0) return 0;
  const w0 = wigner3j(l1, l2, l3, 0, 0, 0);
  if (w0 === 0) return 0;
  return Math.sqrt(((2 * l1 + 1) * (2 * l2 + 1) * (2 * l3 + 1)) / (4 * Math.PI)) * w0 * wigner3j(l1, l2, l3, m1, m2, m3);
}

/** Legendre polynomials P_0..P_lmax at x by the Bonnet recurrence. */
export function legendre(lmax: number, x: number, out: Float64Array = new Float64Array(lmax + 1)): Float64Array {
  out[0] = 1;
  if (lmax >= 1) out[1] = x;
  for (let l = 1; l < lmax; l++) out[l + 1] = ((2 * l + 1) * x * out[l] - l * out[l - 1]) / (l + 1);
  return out;
}

/** Associated Legendre P_l^m(x), m >= 0, with the Condon-Shortley phase (-1)^m. */
export function associatedLegendre(l: number, m: number, x: number): number {
  if (m < 0 || m > l) return 0;
  let pmm = 1;
  const s = Math.sqrt(Math.max(0, 1 - x * x));
  for (let i = 1; i <= m; i++) pmm *= -(2 * i - 1) * s;
  if (l === m) return pmm;
  let pm1 = x * (2 * m + 1) * pmm;
  if (l === m + 1) return pm1;
  let result = 0;
  for (let ll = m + 2; ll <= l; ll++) {
    result = ((2 * ll - 1) * x * pm1 - (ll + m - 1) * pmm) / (ll - m);
    pmm = pm1;
    pm1 = result;
  }
  return result;
}

/** Complex spherical harmonic Y_lm(theta, phi) as [re, im] (Condon-Shortley phase). */
export function sphericalHarmonic(l: number, m: number, theta: number, phi: number): [number, number] {
  const am = Math.abs(m);
  const norm = Math.sqrt(((2 * l + 1) / (4 * Math.PI)) * Math.exp(logFactorial(l - am) - logFactorial(l + am)));
  let value = norm * associatedLegendre(l, am, Math.cos(theta));
  if (m < 0 && am % 2 === 1) value = -value;
  return [value * Math.cos(m * phi), value * Math.sin(m * phi)];
}
