/**
 * Multi-start least squares: the Levenberg-Marquardt fit of ./levenberg-marquardt from the given
 * start and from seeded random starts, keeping the lowest sum of squares. A guard against local
 * minima (common practice, no source), reproducible because the starts come from a seeded
 * generator (./random), never from Math.random.
 *
 * Random starts: a parameter with two finite bounds is drawn uniformly between them; one with one
 * or no bound is drawn uniformly in x0 +- spread * max(|x0|, 1e-3) (x0 its given start), folded
 * back inside a one-sided bound.
 */
import { InputError } from '../core/errors';
import { seededRandom } from './random';
import { fitLeastSquares, type LeastSquaresOptions, type LeastSquaresProblem, type LeastSquaresResult } from './levenberg-marquardt';

/** Options of {@link fitLeastSquaresMultiStart}: the single-fit options plus the start plan. */
export interface MultiStartOptions extends LeastSquaresOptions {
  /** Number of fits including the given start (default 8). */
  starts?: number;
  /** Seed of the start generator (default 1). */
  seed?: number;
  /** Relative half-width of the start box for parameters without two bounds (default 0.5). */
  spread?: number;
}

/** Best fit plus a summary of every start. */
export interface MultiStartResult extends LeastSquaresResult {
  /** Index (0 = the given start) of the fit returned. */
  bestStart: number;
  /** One entry per start, in order. */
  startSummaries: { start: Float64Array; ssr: number; status: LeastSquaresResult['status'] }[];
}

/**
 * Fit from `starts` starting points and return the lowest-ssr fit whose status is not 'failed'
 * (the first start's result when all failed).
 */
export function fitLeastSquaresMultiStart(problem: LeastSquaresProblem, options: MultiStartOptions = {}): MultiStartResult {
  const starts = options.starts ?? 8;
  const spread = options.spread ?? 0.5;
  if (!Number.isInteger(starts) || starts < 1) throw new InputError(`starts must be a positive integer, got ${starts}`, { key: 'starts' });
  if (!(spread > 0)) throw new InputError(`spread must be > 0, got ${spread}`, { key: 'spread' });
  const random = seededRandom(options.seed ?? 1);
  const n = problem.initial.length;
  const lower = problem.lower;
  const upper = problem.upper;
  const summaries: MultiStartResult['startSummaries'] = [];
  let best: LeastSquaresResult | null = null;
  let bestStart = 0;
  for (let s = 0; s < starts; s++) {
    const start = new Float64Array(n);
    for (let j = 0; j < n; j++) {
      const x0 = problem.initial[j];
      const lo = lower ? lower[j] : -Infinity;
      const hi = upper ? upper[j] : Infinity;
      if (s === 0) {
        start[j] = x0;
      } else if (Number.isFinite(lo) && Number.isFinite(hi)) {
        start[j] = lo + (hi - lo) * (0.001 + 0.998 * random.uniform());
      } else {
        const half = spread * Math.max(Math.abs(x0), 1e-3);
        let v = x0 + half * (2 * random.uniform() - 1);
        if (v <= lo) v = lo + (lo - v) + 1e-9 * Math.max(1, Math.abs(lo));
        if (v >= hi) v = hi - (v - hi) - 1e-9 * Math.max(1, Math.abs(hi));
        start[j] = v;
      }
    }
    // Explicit wrapper (not a spread): methods on a class prototype must survive.
    const jacobian = problem.jacobian;
    const result = fitLeastSquares(
      {
        nResiduals: problem.nResiduals,
        initial: start,
        lower,
        upper,
        residuals: (p, out) => problem.residuals(p, out),
        jacobian: jacobian ? (p, out) => jacobian.call(problem, p, out) : undefined,
      },
      options,
    );
    summaries.push({ start, ssr: result.ssr, status: result.status });
    const usable = result.status !== 'failed' && Number.isFinite(result.ssr);
    const bestUsable = best !== null && best.status !== 'failed' && Number.isFinite(best.ssr);
    if (best === null || (usable && (!bestUsable || result.ssr < best.ssr))) {
      best = result;
      bestStart = s;
    }
  }
  return { ...best!, bestStart, startSummaries: summaries };
}
