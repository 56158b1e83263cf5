/**
 * Windows for Fourier transforms of chi(k) (and of chi(R) for back-transforms).
 *
 * A window is described by its shape, the range [min, max] over which it is (nearly) 1,
 * and a taper width: the window rises from 0 to 1 over [min - taper/2, min + taper/2]
 * and falls again over [max - taper/2, max + taper/2], so it is 1/2 at the range ends.
 * This convention keeps the nominal range the "half-height" width, which is what enters
 * the independent-point estimate 2 Dk DR / pi (Stern, Phys. Rev. B 48, 9825 (1993)).
 *
 * Shapes:
 * - `hann`: sin^2 (Hann, raised cosine) tapers; common practice, no source.
 * - `box`: a sharp window (taper ignored), 1 inside [min, max] and 0 outside.
 * - `kaiser`: Kaiser-Bessel, W = I0(beta sqrt(1 - x^2)) / I0(beta), with x running from -1 to 1
 *   across [min - taper/2, max + taper/2] (Kaiser, in "System Analysis by Digital Computer",
 *   Wiley 1966; Harris, Proc. IEEE 66, 51 (1978)). `beta` sets the sidelobe level.
 * - `welch`: a parabolic taper, 1 - x^2 across the taper (Welch, IEEE Trans. Audio
 *   Electroacoust. 15, 70 (1967)).
 */
import { besselI0 } from './special';

export type WindowShape = 'hann' | 'box' | 'kaiser' | 'welch';

export const WINDOW_SHAPES: readonly WindowShape[] = ['hann', 'box', 'kaiser', 'welch'];

export interface WindowSpec {
  shape: WindowShape;
  /** Lower end of the range (1/Å for k windows, Å for R windows). */
  min: number;
  /** Upper end of the range. */
  max: number;
  /** Taper width, same unit as min and max; default 1 for k, 0.5 for R (set by callers). */
  taper: number;
  /** Kaiser-Bessel shape parameter; default 4. */
  beta?: number;
}

/** The window's value at one abscissa. */
export function windowValue(spec: WindowSpec, x: number): number {
  const { shape, min, max } = spec;
  const taper = Math.max(spec.taper, 0);
  if (shape === 'box' || taper === 0) return x >= min && x <= max ? 1 : 0;
  if (shape === 'kaiser') {
    const lo = min - taper / 2;
    const hi = max + taper / 2;
    if (x <= lo || x >= hi) return 0;
    const t = (2 * (x - lo)) / (hi - lo) - 1;
    const beta = spec.beta ?? 4;
    return besselI0(beta * Math.sqrt(1 - t * t)) / besselI0(beta);
  }
  const rise = edge(x - (min - taper / 2), taper, shape);
  const fall = edge(max + taper / 2 - x, taper, shape);
  return Math.min(rise, fall);
}

function edge(distanceInside: number, taper: number, shape: WindowShape): number {
  if (distanceInside <= 0) return 0;
  if (distanceInside >= taper) return 1;
  const s = distanceInside / taper;
  if (shape === 'hann') {
    const v = Math.sin((Math.PI / 2) * s);
    return v * v;
  }
  // welch: parabolic, 1 - (1 - s)^2
  return 1 - (1 - s) * (1 - s);
}

/** The window sampled on a grid. */
export function windowOnGrid(spec: WindowSpec, grid: Float64Array): Float64Array {
  const out = new Float64Array(grid.length);
  for (let i = 0; i < grid.length; i++) out[i] = windowValue(spec, grid[i]);
  return out;
}
