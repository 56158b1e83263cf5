/**
 * Spherical Bessel functions of real argument for all orders 0..lmax at once: j_l(x), y_l(x)
 * and the outgoing spherical Hankel function h_l(x) = j_l(x) + i y_l(x).
 *
 * Method (Abramowitz and Stegun, Handbook of Mathematical Functions, 10.1.11-10.1.22; the
 * stability argument is that of Miller's algorithm, e.g. Gautschi, SIAM Review 9, 24 (1967)):
 * - y_l by upward recurrence f_{l+1} = (2l+1)/x f_l - f_{l-1} from the closed forms of y_0, y_1
 *   (y_l is the dominant solution, so upward recurrence is stable for every x > 0);
 * - j_l by upward recurrence while l < x (stable there) and by Miller's downward recurrence,
 *   normalised to the closed form of j_0 or j_1, when lmax >= x (j_l is then the minimal solution);
 *   below x = 1e-3 the two-term power series j_l = x^l / (2l+1)!! (1 - x^2 / (2(2l+3))) is used.
 * - Derivatives from f_l' = f_{l-1} - (l+1)/x f_l (A&S 10.1.22), f_0' = -f_1.
 */

/** Double factorial (2l+1)!! for the small-argument series. */
function doubleFactorialOdd(l: number): number {
  let p = 1;
  for (let i = 3; i <= 2 * l + 1; i += 2) p *= i;
  return p;
}

/**
 * j_l(x) for l = 0..lmax, x > 0 (x = 0 gives j_0 = 1, others 0). Writes into `out` (length >= lmax+1)
 * and returns it.
 */
export function sphericalBesselJ(lmax: number, x: number, out: Float64Array = new Float64Array(lmax + 1)): Float64Array {
  if (x === 0) {
    out.fill(0, 0, lmax + 1);
    out[0] = 1;
    return out;
  }
  if (x < 1e-3) {
    let power = 1;
    for (let l = 0; l <= lmax; l++) {
      out[l] = (power / doubleFactorialOdd(l)) * (1 - (x * x) / (2 * (2 * l + 3)));
      power *= x;
    }
    return out;
  }
  const j0 = Math.sin(x) / x;
  const j1 = Math.sin(x) / (x * x) - Math.cos(x) / x;
  if (lmax < x) {
    out[0] = j0;
    if (lmax >= 1) out[1] = j1;
    for (let l = 1; l < lmax; l++) out[l + 1] = ((2 * l + 1) / x) * out[l] - out[l - 1];
    return out;
  }
  // Miller: start well above both lmax and x with (0, tiny) and recur downward.
  const start = Math.ceil(Math.max(lmax, x)) + 20 + Math.ceil(Math.sqrt(40 * Math.max(lmax, x)));
  let above = 0;
  let current = 1e-300;
  for (let l = start; l > 0; l--) {
    const below = ((2 * l + 1) / x) * current - above;
    above = current;
    current = below;
    if (l - 1 <= lmax) out[l - 1] = current;
    if (Math.abs(current) > 1e250) {
      // rescale to avoid overflow
      const s = 1e-250;
      current *= s;
      above *= s;
      for (let m = l - 1; m <= lmax; m++) out[m] *= s;
    }
  }
  // current = unnormalised j_0, above = unnormalised j_1
  const scale = Math.abs(j0) >= Math.abs(j1) ? j0 / current : j1 / above;
  for (let l = 0; l <= lmax; l++) out[l] *= scale;
  return out;
}

/** y_l(x) for l = 0..lmax, x > 0 (upward recurrence, stable). */
export function sphericalBesselY(lmax: number, x: number, out: Float64Array = new Float64Array(lmax + 1)): Float64Array {
  out[0] = -Math.cos(x) / x;
  if (lmax >= 1) out[1] = -Math.cos(x) / (x * x) - Math.sin(x) / x;
  for (let l = 1; l < lmax; l++) {
    out[l + 1] = ((2 * l + 1) / x) * out[l] - out[l - 1];
    if (!Number.isFinite(out[l + 1])) {
      for (let m = l + 1; m <= lmax; m++) out[m] = -Infinity;
      break;
    }
  }
  return out;
}

/** Derivatives f_l'(x) from values f_0..f_lmax+1 (length lmax+2): f_l' = f_{l-1} - (l+1)/x f_l, f_0' = -f_1. */
export function besselDerivatives(values: Float64Array, lmax: number, x: number, out: Float64Array = new Float64Array(lmax + 1)): Float64Array {
  out[0] = -values[1];
  for (let l = 1; l <= lmax; l++) out[l] = values[l - 1] - ((l + 1) / x) * values[l];
  return out;
}

/**
 * Outgoing spherical Hankel functions h_l(x) = j_l(x) + i y_l(x), l = 0..lmax, x > 0, written
 * as separate real and imaginary arrays. For l > x the real part (j_l) loses relative accuracy
 * but is negligible against y_l there; the complex value keeps full relative accuracy.
 */
export function sphericalHankel(lmax: number, x: number, re: Float64Array = new Float64Array(lmax + 1), im: Float64Array = new Float64Array(lmax + 1)): { re: Float64Array; im: Float64Array } {
  sphericalBesselJ(lmax, x, re);
  sphericalBesselY(lmax, x, im);
  return { re, im };
}
