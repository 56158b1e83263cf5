/**
 * Special functions needed by windows and disorder models.
 */

/**
 * Modified Bessel function of the first kind, order 0, by its power series
 * I0(x) = sum_m ((x/2)^m / m!)^2 (Abramowitz and Stegun 9.6.12), summed to machine precision.
 */
export function besselI0(x: number): number {
  const q = (x * x) / 4;
  let term = 1;
  let sum = 1;
  for (let m = 1; m < 500; m++) {
    term *= q / (m * m);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return sum;
}

/** Hyperbolic cotangent, with coth(x) ~ 1/x + x/3 near zero. */
export function coth(x: number): number {
  if (Math.abs(x) < 1e-6) return 1 / x + x / 3;
  return 1 / Math.tanh(x);
}
