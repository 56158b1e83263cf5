/**
 * The logarithmic radial grid r_i = r0 exp(i h), i = 0..n-1, and quadratures on it.
 *
 * With x = ln r the grid is uniform in x and dr = r dx. Integrands of bound atomic quantities
 * (densities, wavefunction products) vanish smoothly at both ends of the x axis, so the plain
 * trapezoidal sum in x converges faster than any power of h (Euler-Maclaurin: all end
 * corrections vanish); running (cumulative) integrals use a fourth-order Lagrange rule.
 * Legend: r radius (bohr), h step in x = ln r, g(x) = f(r) r the integrand in x.
 */
import { InputError } from '../../core/errors';

/** A logarithmic radial grid. */
export interface LogGrid {
  /** Radii in bohr, r[i] = r0 exp(i h). */
  readonly r: Float64Array;
  /** First radius in bohr. */
  readonly r0: number;
  /** Step in ln r. */
  readonly h: number;
  /** Number of points. */
  readonly n: number;
}

/** Settings of a logarithmic grid (all optional; defaults in {@link defaultGridSettings}). */
export interface LogGridSettings {
  /** First radius in bohr. */
  r0?: number;
  /** Step in ln r. */
  h?: number;
  /** Last radius in bohr (the grid ends at the first point at or beyond it). */
  rMax?: number;
}

/**
 * Defaults: r0 = 1e-5 / Z bohr (far inside the 1s shell of radius ~1/Z), h = 0.0125 and
 * rMax = 60 bohr (the outermost LDA valence density of a neutral atom is below 1e-20 there).
 * Common practice for all-electron log grids, no source; the accuracy they give is measured
 * in test/scatter-atom-nist.test.ts.
 */
export function defaultGridSettings(z: number): Required<LogGridSettings> {
  return { r0: 1e-5 / z, h: 0.0125, rMax: 60 };
}

/** Builds the grid; InputError for non-positive or inconsistent settings. */
export function logGrid(settings: Required<LogGridSettings>): LogGrid {
  const { r0, h, rMax } = settings;
  if (!(r0 > 0) || !Number.isFinite(r0)) throw new InputError(`grid r0 must be a positive number of bohr, got ${r0}`, { key: 'grid.r0' });
  if (!(h > 0) || !(h <= 0.1)) throw new InputError(`grid h must be in (0, 0.1], got ${h}`, { key: 'grid.h' });
  if (!(rMax > r0 * 1e3) || !Number.isFinite(rMax)) {
    throw new InputError(`grid rMax must be a finite radius well beyond r0 = ${r0} bohr, got ${rMax}`, { key: 'grid.rMax' });
  }
  const n = Math.ceil(Math.log(rMax / r0) / h) + 1;
  if (n > 200_000) throw new InputError(`grid would have ${n} points; increase h or r0`, { key: 'grid.h' });
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) r[i] = r0 * Math.exp(i * h);
  return { r, r0, h, n };
}

/**
 * Integral of f(r) dr over the grid, f given at the grid points: h * sum f_i r_i (trapezoid in
 * x with half weights at the ends). Spectrally accurate when f r vanishes smoothly at both ends.
 */
export function integrate(grid: LogGrid, f: Float64Array): number {
  const { r, h, n } = grid;
  let s = 0.5 * (f[0] * r[0] + f[n - 1] * r[n - 1]);
  for (let i = 1; i < n - 1; i++) s += f[i] * r[i];
  return s * h;
}

/**
 * Integral of a(r) b(r) dr over the grid (same rule as {@link integrate}), without allocation.
 */
export function integrateProduct(grid: LogGrid, a: Float64Array, b: Float64Array): number {
  const { r, h, n } = grid;
  let s = 0.5 * (a[0] * b[0] * r[0] + a[n - 1] * b[n - 1] * r[n - 1]);
  for (let i = 1; i < n - 1; i++) s += a[i] * b[i] * r[i];
  return s * h;
}

/**
 * Running integral in x: out[i] = out[0] + integral from x_0 to x_i of g dx, with the
 * four-point (cubic Lagrange) panel rule h/24 (-g_{i-1} + 13 g_i + 13 g_{i+1} - g_{i+2}),
 * one-sided h/24 (9, 19, -5, 1) panels at the two ends. Needs n >= 4.
 * @param g integrand in x at the grid points (for an integral of f dr, pass g = f r).
 * @param start value of out[0].
 */
export function cumulativeFromStart(g: Float64Array, h: number, start: number, out: Float64Array): Float64Array {
  const n = g.length;
  const w = h / 24;
  out[0] = start;
  out[1] = start + w * (9 * g[0] + 19 * g[1] - 5 * g[2] + g[3]);
  for (let i = 1; i < n - 2; i++) out[i + 1] = out[i] + w * (-g[i - 1] + 13 * g[i] + 13 * g[i + 1] - g[i + 2]);
  out[n - 1] = out[n - 2] + w * (9 * g[n - 1] + 19 * g[n - 2] - 5 * g[n - 3] + g[n - 4]);
  return out;
}

/**
 * Running integral towards the end: out[i] = out[n-1] + integral from x_i to x_{n-1} of g dx,
 * same panel rules as {@link cumulativeFromStart}.
 */
export function cumulativeToEnd(g: Float64Array, h: number, end: number, out: Float64Array): Float64Array {
  const n = g.length;
  const w = h / 24;
  out[n - 1] = end;
  out[n - 2] = end + w * (9 * g[n - 1] + 19 * g[n - 2] - 5 * g[n - 3] + g[n - 4]);
  for (let i = n - 3; i >= 1; i--) out[i] = out[i + 1] + w * (-g[i - 1] + 13 * g[i] + 13 * g[i + 1] - g[i + 2]);
  out[0] = out[1] + w * (9 * g[0] + 19 * g[1] - 5 * g[2] + g[3]);
  return out;
}
