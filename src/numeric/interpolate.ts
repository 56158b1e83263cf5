/**
 * Interpolation on uniform grids: cubic Hermite with Catmull-Rom slopes (Catmull and Rom, in
 * Computer Aided Geometric Design, Academic Press 1974), returning the value and its derivative,
 * and linear interpolation on arbitrary increasing grids.
 */

/**
 * Cubic Hermite interpolation of samples y on the uniform grid x0 + i*dx, at x.
 * Outside the grid the end values are held (derivative 0). Writes [value, derivative] into `out`.
 */
export function cubicUniform(y: Float64Array, x0: number, dx: number, x: number, out: Float64Array): void {
  const n = y.length;
  const t = (x - x0) / dx;
  if (t <= 0) { out[0] = y[0]; out[1] = 0; return; }
  if (t >= n - 1) { out[0] = y[n - 1]; out[1] = 0; return; }
  const i = Math.floor(t);
  const s = t - i;
  const y0 = y[i], y1 = y[i + 1];
  const m0 = i > 0 ? 0.5 * (y1 - y[i - 1]) : y1 - y0;
  const m1 = i + 2 < n ? 0.5 * (y[i + 2] - y0) : y1 - y0;
  const s2 = s * s, s3 = s2 * s;
  out[0] = (2 * s3 - 3 * s2 + 1) * y0 + (s3 - 2 * s2 + s) * m0 + (-2 * s3 + 3 * s2) * y1 + (s3 - s2) * m1;
  out[1] = ((6 * s2 - 6 * s) * y0 + (3 * s2 - 4 * s + 1) * m0 + (-6 * s2 + 6 * s) * y1 + (3 * s2 - 2 * s) * m1) / dx;
}

/** Linear interpolation of (xs, ys) at x (xs increasing); end values held outside. */
export function linearAt(xs: Float64Array, ys: Float64Array, x: number): number {
  const n = xs.length;
  if (x <= xs[0]) return ys[0];
  if (x >= xs[n - 1]) return ys[n - 1];
  let lo = 0, hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] <= x) lo = mid; else hi = mid;
  }
  const f = (x - xs[lo]) / (xs[hi] - xs[lo]);
  return ys[lo] + f * (ys[hi] - ys[lo]);
}

/** Linear interpolation of (xs, ys) onto a new increasing grid. */
export function linearOnto(xs: Float64Array, ys: Float64Array, grid: Float64Array): Float64Array {
  const out = new Float64Array(grid.length);
  for (let i = 0; i < grid.length; i++) out[i] = linearAt(xs, ys, grid[i]);
  return out;
}
