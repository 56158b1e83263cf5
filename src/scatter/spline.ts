/**
 * Natural cubic spline through (x_i, y_i), x increasing (the tridiagonal second-derivative
 * system, e.g. Press et al., Numerical Recipes, 3rd ed., section 3.3). Outside the knots the
 * end values are held.
 */
export interface CubicSpline {
  x: Float64Array;
  y: Float64Array;
  second: Float64Array;
}

export function cubicSpline(x: Float64Array, y: Float64Array): CubicSpline {
  const n = x.length;
  const second = new Float64Array(n);
  if (n < 3) return { x, y, second };
  const u = new Float64Array(n);
  for (let i = 1; i < n - 1; i++) {
    const sig = (x[i] - x[i - 1]) / (x[i + 1] - x[i - 1]);
    const p = sig * second[i - 1] + 2;
    second[i] = (sig - 1) / p;
    const d = (y[i + 1] - y[i]) / (x[i + 1] - x[i]) - (y[i] - y[i - 1]) / (x[i] - x[i - 1]);
    u[i] = ((6 * d) / (x[i + 1] - x[i - 1]) - sig * u[i - 1]) / p;
  }
  second[n - 1] = 0;
  for (let k = n - 2; k >= 0; k--) second[k] = second[k] * second[k + 1] + u[k];
  return { x, y, second };
}

/** Value of the spline at t (binary search for the interval). */
export function splineAt(s: CubicSpline, t: number): number {
  const { x, y, second } = s;
  const n = x.length;
  if (n === 1) return y[0];
  if (t <= x[0]) return y[0];
  if (t >= x[n - 1]) return y[n - 1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (x[mid] > t) hi = mid;
    else lo = mid;
  }
  const h = x[hi] - x[lo];
  const a = (x[hi] - t) / h;
  const b = (t - x[lo]) / h;
  return a * y[lo] + b * y[hi] + ((a * a * a - a) * second[lo] + (b * b * b - b) * second[hi]) * (h * h) / 6;
}
