/**
 * Smooth maps between bounded external parameters x and unbounded internal parameters u,
 * so that an unconstrained Levenberg-Marquardt step in u can never leave the bounds in x.
 *
 * The transforms are those of James and Roos, Comput. Phys. Commun. 10, 343 (1975)
 * (the MINUIT function-minimisation package, its manual section "bounds"):
 * - two-sided  lo <= x <= hi:  x = lo + (hi - lo) (sin u + 1) / 2,      u = asin(2 (x - lo)/(hi - lo) - 1)
 * - lower only x >= lo:        x = lo - 1 + sqrt(u^2 + 1),               u = sqrt((x - lo + 1)^2 - 1)
 * - upper only x <= hi:        x = hi + 1 - sqrt(u^2 + 1),               u = sqrt((hi - x + 1)^2 - 1)
 * - unbounded:                 x = u.
 * dx/du is returned for the chain rule J_u = J_x diag(dx/du). At a bound dx/du = 0, so a start
 * exactly on a bound is moved inside by a small margin (see {@link toInternal}).
 */
import { InputError } from '../core/errors';

/** Kind of bound per parameter: 0 none, 1 lower, 2 upper, 3 both. */
export type BoundKind = 0 | 1 | 2 | 3;

/** Precomputed bound description for n parameters. */
export interface BoundMap {
  readonly n: number;
  readonly kind: Uint8Array;
  readonly lower: Float64Array;
  readonly upper: Float64Array;
  /** True when no parameter is bounded (the maps are identities). */
  readonly identity: boolean;
}

/**
 * Validate bounds and build the map. Missing arrays or infinite entries mean "no bound".
 * @throws InputError when lengths disagree, a bound is NaN, or lower >= upper.
 */
export function makeBoundMap(n: number, lower?: ArrayLike<number>, upper?: ArrayLike<number>): BoundMap {
  if (lower !== undefined && lower.length !== n) {
    throw new InputError(`lower bounds have ${lower.length} entries, expected ${n} (one per parameter)`, { key: 'lower' });
  }
  if (upper !== undefined && upper.length !== n) {
    throw new InputError(`upper bounds have ${upper.length} entries, expected ${n} (one per parameter)`, { key: 'upper' });
  }
  const kind = new Uint8Array(n);
  const lo = new Float64Array(n).fill(-Infinity);
  const hi = new Float64Array(n).fill(Infinity);
  let identity = true;
  for (let i = 0; i < n; i++) {
    const l = lower === undefined ? -Infinity : lower[i];
    const h = upper === undefined ? Infinity : upper[i];
    if (Number.isNaN(l) || Number.isNaN(h)) throw new InputError(`bound of parameter ${i} is NaN`, { key: 'bounds' });
    if (!(l < h)) throw new InputError(`parameter ${i}: lower bound ${l} is not below upper bound ${h}`, { key: 'bounds' });
    lo[i] = l;
    hi[i] = h;
    const k = ((Number.isFinite(l) ? 1 : 0) | (Number.isFinite(h) ? 2 : 0)) as BoundKind;
    kind[i] = k;
    if (k !== 0) identity = false;
  }
  return { n, kind, lower: lo, upper: hi, identity };
}

/**
 * Internal value for an external start value. Values outside the bounds are refused; values
 * exactly on a bound are moved inside by `margin` (relative to the range for two-sided bounds,
 * absolute 1e-8 * max(1, |bound|) for one-sided ones) so that dx/du is not zero at the start.
 * @throws InputError naming the parameter index when a start lies outside its bounds.
 */
export function toInternal(map: BoundMap, x: ArrayLike<number>, out: Float64Array, margin = 1e-8): void {
  for (let i = 0; i < map.n; i++) {
    const xi = x[i];
    const lo = map.lower[i];
    const hi = map.upper[i];
    if (!Number.isFinite(xi)) throw new InputError(`start value of parameter ${i} is ${xi}`, { key: 'initial' });
    if (xi < lo || xi > hi) {
      throw new InputError(`start value ${xi} of parameter ${i} lies outside its bounds [${lo}, ${hi}]`, { key: 'initial' });
    }
    switch (map.kind[i]) {
      case 0:
        out[i] = xi;
        break;
      case 1: {
        const d = Math.max(xi - lo, margin * Math.max(1, Math.abs(lo)));
        out[i] = Math.sqrt((d + 1) * (d + 1) - 1);
        break;
      }
      case 2: {
        const d = Math.max(hi - xi, margin * Math.max(1, Math.abs(hi)));
        out[i] = Math.sqrt((d + 1) * (d + 1) - 1);
        break;
      }
      default: {
        const t = Math.min(Math.max((2 * (xi - lo)) / (hi - lo) - 1, -1 + margin), 1 - margin);
        out[i] = Math.asin(t);
      }
    }
  }
}

/**
 * External values x(u) and, when `derivative` is given, dx/du.
 * Clamped to the bounds against rounding.
 */
export function toExternal(map: BoundMap, u: Float64Array, out: Float64Array, derivative?: Float64Array): void {
  for (let i = 0; i < map.n; i++) {
    const ui = u[i];
    switch (map.kind[i]) {
      case 0:
        out[i] = ui;
        if (derivative) derivative[i] = 1;
        break;
      case 1: {
        const s = Math.sqrt(ui * ui + 1);
        out[i] = Math.max(map.lower[i], map.lower[i] - 1 + s);
        if (derivative) derivative[i] = ui / s;
        break;
      }
      case 2: {
        const s = Math.sqrt(ui * ui + 1);
        out[i] = Math.min(map.upper[i], map.upper[i] + 1 - s);
        if (derivative) derivative[i] = -ui / s;
        break;
      }
      default: {
        const lo = map.lower[i];
        const half = 0.5 * (map.upper[i] - lo);
        const v = lo + half * (Math.sin(ui) + 1);
        out[i] = Math.min(map.upper[i], Math.max(lo, v));
        if (derivative) derivative[i] = half * Math.cos(ui);
      }
    }
  }
}

/**
 * Whether external value x sits at (within `relative` of the range, or of max(1, |bound|) for
 * one-sided bounds) a bound of parameter i; returns 'lower', 'upper' or null.
 */
export function atBound(map: BoundMap, i: number, x: number, relative = 1e-6): 'lower' | 'upper' | null {
  const lo = map.lower[i];
  const hi = map.upper[i];
  const k = map.kind[i];
  if (k === 0) return null;
  const scaleLo = k === 3 ? hi - lo : Math.max(1, Math.abs(lo));
  const scaleHi = k === 3 ? hi - lo : Math.max(1, Math.abs(hi));
  if (k & 1 && x - lo <= relative * scaleLo) return 'lower';
  if (k & 2 && hi - x <= relative * scaleHi) return 'upper';
  return null;
}
