/**
 * Edge position and normalisation of mu(E).
 *
 * - E0 is the energy of the maximum of the smoothed derivative dmu/dE (common practice, no
 *   source; docs/methods.md): three-point derivatives on the measured grid, smoothed by a Gaussian of
 *   width `smoothingEv` weighted by each point's share of the energy axis, maximum refined by a
 *   parabola through its neighbours.
 * - Pre-edge: a polynomial (default a line) fitted to mu over [E0 + pre1, E0 + pre2] and extended
 *   over the whole scan. Post-edge: a polynomial (default quadratic) over [E0 + post1, E0 + post2].
 * - Edge step: post(E0) - pre(E0). Normalised mu: (mu - pre(E)) / step. Detrended mu: the
 *   normalised mu with the post-edge polynomial's departure from a flat step removed above E0,
 *   norm - ((post(E) - pre(E)) / step - 1) for E >= E0.
 */
import { InputError } from '../core/errors';
import { evaluatePolynomial, fitPolynomial, unscaledCoefficients, type Polynomial } from './least-squares';

/** Where E0 came from and how it was found. */
export interface E0Report {
  /** E0 in eV. */
  value: number;
  method: 'given' | 'smoothed-derivative maximum';
  /** Gaussian smoothing width (eV) of the derivative (0 when given). */
  smoothingEv: number;
  /** Value of the smoothed derivative at E0 (mu units per eV; NaN when given). */
  derivative: number;
}

export interface E0Options {
  /** Gaussian smoothing width of the derivative, eV; default 1.0. */
  smoothingEv?: number;
  /** Search only within [lo, hi] eV; default the whole scan less 3 points at each end. */
  searchRange?: [number, number];
}

/** The derivative dmu/dE on the measured grid, smoothed by a Gaussian of width `sigma` eV. */
export function smoothedDerivative(energy: Float64Array, mu: Float64Array, sigma: number): Float64Array {
  const n = energy.length;
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const lo = Math.max(i - 1, 0);
    const hi = Math.min(i + 1, n - 1);
    d[i] = (mu[hi] - mu[lo]) / (energy[hi] - energy[lo]);
  }
  if (!(sigma > 0)) return d;
  const share = new Float64Array(n);
  for (let i = 0; i < n; i++) share[i] = (energy[Math.min(i + 1, n - 1)] - energy[Math.max(i - 1, 0)]) / 2;
  const out = new Float64Array(n);
  const reach = 4 * sigma;
  let start = 0;
  for (let i = 0; i < n; i++) {
    while (energy[start] < energy[i] - reach) start++;
    let sw = 0;
    let s = 0;
    for (let j = start; j < n && energy[j] <= energy[i] + reach; j++) {
      const t = (energy[j] - energy[i]) / sigma;
      const w = Math.exp(-0.5 * t * t) * share[j];
      sw += w;
      s += w * d[j];
    }
    out[i] = s / sw;
  }
  return out;
}

/**
 * E0 at the maximum of the smoothed derivative.
 * @throws InputError when the search range holds fewer than 3 points.
 */
export function findE0(energy: Float64Array, mu: Float64Array, options: E0Options = {}): E0Report {
  const sigma = options.smoothingEv ?? 1.0;
  const n = energy.length;
  const d = smoothedDerivative(energy, mu, sigma);
  const [lo, hi] = options.searchRange ?? [energy[Math.min(3, n - 1)], energy[Math.max(n - 4, 0)]];
  let best = -1;
  for (let i = 1; i < n - 1; i++) {
    if (energy[i] < lo || energy[i] > hi) continue;
    if (best < 0 || d[i] > d[best]) best = i;
  }
  if (best < 0) throw new InputError(`no points in the E0 search range ${lo}..${hi} eV`, { key: 'e0' });
  // parabola through (best-1, best, best+1)
  const x0 = energy[best - 1], x1 = energy[best], x2 = energy[best + 1];
  const y0 = d[best - 1], y1 = d[best], y2 = d[best + 1];
  const denom = (x0 - x1) * (x0 - x2) * (x1 - x2);
  let e0 = x1;
  if (denom !== 0) {
    const a = (x2 * (y1 - y0) + x1 * (y0 - y2) + x0 * (y2 - y1)) / denom;
    const b = (x2 * x2 * (y0 - y1) + x1 * x1 * (y2 - y0) + x0 * x0 * (y1 - y2)) / denom;
    if (a < 0) e0 = Math.min(Math.max(-b / (2 * a), x0), x2);
  }
  return { value: e0, method: 'smoothed-derivative maximum', smoothingEv: sigma, derivative: d[best] };
}

/** One fitted polynomial line with the range it used. */
export interface EdgeLineReport {
  /** Requested range relative to E0, eV (null: the end of the scan). */
  requested: [number, number | null];
  /** Range used relative to E0, eV (the requested one clipped to the data). */
  used: [number, number];
  /** True when the requested range had to be clipped to the data. */
  clipped: boolean;
  order: number;
  points: number;
  /** Coefficients a_m of sum_m a_m E^m with E in eV. */
  coefficients: number[];
  polynomial: Polynomial;
}

export interface NormalisationSettings {
  /** Pre-edge range relative to E0, eV; default [-150, -30]. */
  preEdge: [number, number];
  /** Pre-edge polynomial order (0-2); default 1. */
  preEdgeOrder: number;
  /** Post-edge range relative to E0, eV; default [150, null], null meaning the end of the scan. */
  postEdge: [number, number | null];
  /** Post-edge polynomial order (0-3); default 2. */
  postEdgeOrder: number;
  /**
   * Refit the post-edge polynomial to the smooth background mu0(E) once the background spline
   * is known, instead of to the oscillating mu(E), and rescale chi; default true.
   */
  refineStep: boolean;
}

export const DEFAULT_NORMALISATION: NormalisationSettings = {
  preEdge: [-150, -30],
  preEdgeOrder: 1,
  postEdge: [150, null],
  postEdgeOrder: 2,
  refineStep: true,
};

export interface Normalisation {
  e0: number;
  edgeStep: number;
  preEdge: EdgeLineReport;
  postEdge: EdgeLineReport;
  /** Pre-edge line on the scan's energies. */
  preLine: Float64Array;
  /** Post-edge polynomial on the scan's energies. */
  postLine: Float64Array;
  /** (mu - pre) / step. */
  normalised: Float64Array;
  /** Normalised mu detrended above E0. */
  detrended: Float64Array;
}

function fitEdgeLine(
  energy: Float64Array,
  mu: Float64Array,
  e0: number,
  requested: [number, number | null],
  order: number,
  which: 'pre-edge' | 'post-edge',
  file: string | undefined,
): EdgeLineReport {
  const first = energy[0] - e0;
  const last = energy[energy.length - 1] - e0;
  const used: [number, number] = [Math.max(requested[0], first), Math.min(requested[1] ?? last, last)];
  const clipped = used[0] !== requested[0] || (requested[1] !== null && used[1] !== requested[1]);
  const fit = used[1] > used[0] ? fitPolynomial(energy, mu, e0 + used[0], e0 + used[1], order) : null;
  const minimum = order + 2;
  if (!fit || fit.points < minimum) {
    const held = fit ? fit.points : 0;
    const hint =
      which === 'pre-edge'
        ? `the scan starts at ${energy[0]} eV, ${(-first).toFixed(1)} eV below E0 = ${e0.toFixed(2)} eV; a scan that starts at or after the edge cannot be normalised`
        : `the scan ends at ${energy[energy.length - 1]} eV, ${last.toFixed(1)} eV above E0 = ${e0.toFixed(2)} eV; too few points above the edge`;
    throw new InputError(
      `the ${which} range [${requested[0]}, ${requested[1] ?? 'end'}] eV from E0 holds ${held} points, a degree-${order} fit needs at least ${minimum}: ${hint}`,
      { file, key: which === 'pre-edge' ? 'preEdge' : 'postEdge' },
    );
  }
  return { requested, used, clipped, order, points: fit.points, coefficients: unscaledCoefficients(fit.polynomial), polynomial: fit.polynomial };
}

/**
 * Pre-edge line, post-edge polynomial, edge step, normalised and detrended mu.
 * `postSource` (default mu) is what the post-edge polynomial is fitted to: the refinement passes
 * the smooth background mu0(E) here.
 * @throws InputError naming the range when it holds too few points, or when the step is not positive.
 */
export function normalise(
  energy: Float64Array,
  mu: Float64Array,
  e0: number,
  settings: NormalisationSettings,
  file?: string,
  postSource: Float64Array = mu,
): Normalisation {
  const pre = fitEdgeLine(energy, mu, e0, settings.preEdge, settings.preEdgeOrder, 'pre-edge', file);
  const post = fitEdgeLine(energy, postSource, e0, settings.postEdge, settings.postEdgeOrder, 'post-edge', file);
  const n = energy.length;
  const preLine = new Float64Array(n);
  const postLine = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    preLine[i] = evaluatePolynomial(pre.polynomial, energy[i]);
    postLine[i] = evaluatePolynomial(post.polynomial, energy[i]);
  }
  const edgeStep = evaluatePolynomial(post.polynomial, e0) - evaluatePolynomial(pre.polynomial, e0);
  if (!(edgeStep > 0)) {
    throw new InputError(
      `no absorption edge: the post-edge polynomial lies at or below the pre-edge line at E0 = ${e0.toFixed(2)} eV (step ${edgeStep.toPrecision(3)}); check the signal (transmission vs fluorescence) and E0`,
      { file, key: 'edgeStep' },
    );
  }
  const normalised = new Float64Array(n);
  const detrended = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    normalised[i] = (mu[i] - preLine[i]) / edgeStep;
    detrended[i] = energy[i] >= e0 ? normalised[i] - ((postLine[i] - preLine[i]) / edgeStep - 1) : normalised[i];
  }
  return { e0, edgeStep, preEdge: pre, postEdge: post, preLine, postLine, normalised, detrended };
}
