/**
 * Interpolation of a sampled curve y(x) onto new abscissae by piecewise cubic Hermite
 * polynomials whose slopes are the three-point (non-uniform) finite-difference derivatives
 * (a Catmull-Rom-type spline for unequal steps; de Boor, "A Practical Guide to Splines",
 * Springer 1978, ch. IV). It is local (each interval uses four points), exact for quadratics,
 * and keeps more of an oscillation's amplitude than linear interpolation.
 */

/** Three-point derivative estimate at each sample (one-sided at the ends). */
function slopes(x: Float64Array, y: Float64Array): Float64Array {
  const n = x.length;
  const d = new Float64Array(n);
  if (n < 2) return d;
  d[0] = (y[1] - y[0]) / (x[1] - x[0]);
  d[n - 1] = (y[n - 1] - y[n - 2]) / (x[n - 1] - x[n - 2]);
  for (let i = 1; i < n - 1; i++) {
    const h0 = x[i] - x[i - 1];
    const h1 = x[i + 1] - x[i];
    const s0 = (y[i] - y[i - 1]) / h0;
    const s1 = (y[i + 1] - y[i]) / h1;
    d[i] = (h1 * s0 + h0 * s1) / (h0 + h1);
  }
  return d;
}

/**
 * Interpolate y(x) at each xNew. `x` must increase strictly; values of xNew outside [x0, x_last]
 * take the end values. O(n + m) when xNew increases; any order works.
 */
export function interpolateCubic(x: Float64Array, y: Float64Array, xNew: Float64Array): Float64Array {
  const n = x.length;
  const out = new Float64Array(xNew.length);
  if (n === 0) return out;
  if (n === 1) return out.fill(y[0]);
  const d = slopes(x, y);
  let j = 0;
  for (let m = 0; m < xNew.length; m++) {
    const t = xNew[m];
    if (t <= x[0]) {
      out[m] = y[0];
      continue;
    }
    if (t >= x[n - 1]) {
      out[m] = y[n - 1];
      continue;
    }
    if (t < x[j]) j = 0;
    while (j < n - 2 && x[j + 1] < t) j++;
    const h = x[j + 1] - x[j];
    const s = (t - x[j]) / h;
    const s2 = s * s;
    const s3 = s2 * s;
    out[m] =
      (2 * s3 - 3 * s2 + 1) * y[j] + (s3 - 2 * s2 + s) * h * d[j] + (-2 * s3 + 3 * s2) * y[j + 1] + (s3 - s2) * h * d[j + 1];
  }
  return out;
}

/** Linear interpolation of y(x) at xNew (end values outside). */
export function interpolateLinear(x: Float64Array, y: Float64Array, xNew: Float64Array): Float64Array {
  const n = x.length;
  const out = new Float64Array(xNew.length);
  let j = 0;
  for (let m = 0; m < xNew.length; m++) {
    const t = xNew[m];
    if (t <= x[0]) out[m] = y[0];
    else if (t >= x[n - 1]) out[m] = y[n - 1];
    else {
      if (t < x[j]) j = 0;
      while (j < n - 2 && x[j + 1] < t) j++;
      const s = (t - x[j]) / (x[j + 1] - x[j]);
      out[m] = y[j] + s * (y[j + 1] - y[j]);
    }
  }
  return out;
}
