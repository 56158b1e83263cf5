/**
 * Running an EXAFS refinement and reporting it: Levenberg-Marquardt (optionally multi-start) on
 * the problem of ./problem.ts, then statistics (../statistics.ts), parameter errors by the delta
 * method for tied quantities, shells with their refined n, r, msrd, c3, c4, correlations and
 * warnings, and the plausibility checks of ./plausibility.ts. Non-convergence is a status in the
 * result, never an exception.
 */
import { InputError } from '../../core/errors';
import { makeProvenance, type InputRecord, type Provenance } from '../../core/provenance';
import { fitLeastSquares, type FitStatus } from '../levenberg-marquardt';
import { fitLeastSquaresMultiStart } from '../multistart';
import { fitStatistics } from '../statistics';
import { propagateNoise, studentTFactor } from '../noise-propagation';
import type { ParameterState } from '../parameters';
import type { DatasetCurves, ExafsProblem } from './problem';
import { plausibilityWarnings, type PlausibilityWarning } from './plausibility';

export interface RefineOptions {
  /** Number of starts (1 = the given start only; more adds seeded random starts). */
  starts?: number;
  seed?: number;
  maxIterations?: number;
}

export interface ValueWithError {
  value: number;
  /** Standard error (one standard deviation); 0 for fixed quantities. */
  error: number;
  /** Two-sided confidence interval at `stats.intervalLevel`, [lower, upper]; absent without errors. */
  interval?: [number, number];
}

/** Confidence level of the intervals in a fit result. */
/** Most starts of one fit: beyond this a run takes hours for nothing (common practice, no source). */
export const MAX_STARTS = 1000;

export const INTERVAL_LEVEL = 0.95;

export interface ShellResult {
  dataset: string;
  id: string;
  species: string;
  /** Distance in the structure, Å. */
  r0: number;
  n: ValueWithError;
  r: ValueWithError;
  msrd: ValueWithError;
  c3: ValueWithError;
  c4: ValueWithError;
}

export interface FitStats {
  rFactor: number;
  chiSquare: number;
  reducedChiSquare: number;
  nIndependent: number;
  nVaried: number;
  nPoints: number;
  degreesOfFreedom: number;
  aic: number;
  bic: number;
  /**
   * 'propagated': errors from the data noise carried through the fit's transforms, scaled by the
   * misfit ratio (../noise-propagation.ts); 'scaled-covariance': (J^T J)^-1 scaled by the reduced
   * chi-square (../statistics.ts), used when the propagation is not possible.
   */
  errorMethod?: 'propagated' | 'scaled-covariance';
  /** Sum of squares over its expected value for noise alone (propagated errors only). */
  misfitRatio?: number;
  /** Degrees of freedom of the error scale, for the t-based intervals. */
  effectiveDegreesOfFreedom?: number;
  /** Confidence level of the `interval` fields. */
  intervalLevel?: number;
}

export interface ParameterResult extends ValueWithError {
  state: ParameterState;
  expression?: string;
  lower?: number;
  upper?: number;
}

/** The result of a refinement: the FitResult of the pipeline. */
export interface ExafsFitResult {
  status: { code: FitStatus; converged: boolean; message: string; iterations: number; evaluations: number };
  stats: FitStats;
  params: Record<string, ParameterResult>;
  shells: ShellResult[];
  /** Correlations between varied parameters, |c| >= 0.5, strongest first. */
  correlations: { a: string; b: string; value: number }[];
  /** Messages for the reader: statistics, convergence and the plausibility messages. */
  warnings: string[];
  /** The plausibility checks (./plausibility.ts) with code, subject, value and limit. */
  plausibility: PlausibilityWarning[];
  curves: DatasetCurves[];
  provenance: Provenance;
}

/** Refine and summarise. `settings` and `inputs` go into the provenance record. */
export function refine(problem: ExafsProblem, options: RefineOptions = {}, settings: Record<string, unknown> = {}, inputs: InputRecord[] = []): ExafsFitResult {
  const set = problem.parameters;
  const lsProblem = {
    residuals: problem.residuals,
    jacobian: problem.jacobian,
    nResiduals: problem.nResiduals,
    initial: set.initialFree,
    lower: set.lowerFree,
    upper: set.upperFree,
  };
  if ((options.starts ?? 1) > MAX_STARTS) throw new InputError(`must be at most ${MAX_STARTS}, got ${options.starts}`, { key: '--starts' });
  const lsOptions = { maxIterations: options.maxIterations ?? 200 };
  const fit = (options.starts ?? 1) > 1
    ? fitLeastSquaresMultiStart(lsProblem, { ...lsOptions, starts: options.starts, seed: options.seed ?? 1 })
    : fitLeastSquares(lsProblem, lsOptions);
  let sumOfSquares = 0;
  for (const r of fit.residuals) sumOfSquares += r * r;
  const propagated = fit.covariance && fit.covariance.length > 0 && fit.jacobian.length === problem.nResiduals * set.freeNames.length
    ? propagateNoise(fit.jacobian, problem.nResiduals, set.freeNames.length, fit.covariance, sumOfSquares, problem.noiseBlocks())
    : null;
  const stats = fitStatistics({
    residuals: fit.residuals,
    data: problem.data,
    noise: 1,
    nIndependent: problem.nIndependent,
    covariance: fit.covariance,
    names: set.freeNames,
    atBound: fit.atBound,
    errorCovariance: propagated?.covariance ?? null,
  });
  const effectiveDegreesOfFreedom = propagated ? propagated.effectiveDegreesOfFreedom : stats.degreesOfFreedom;
  const halfWidth = studentTFactor(INTERVAL_LEVEL, effectiveDegreesOfFreedom);
  const { estimates } = set.propagate(fit.params, stats.scaledCovariance);
  const withInterval = (value: number, error: number): ValueWithError => {
    const out: ValueWithError = { value, error };
    if (error > 0 && Number.isFinite(error) && Number.isFinite(halfWidth)) out.interval = [value - halfWidth * error, value + halfWidth * error];
    return out;
  };
  const byName = new Map(estimates.map((e) => [e.name, e]));
  const params: Record<string, ParameterResult> = {};
  for (let i = 0; i < problem.userParameterCount; i++) {
    const name = set.names[i];
    const e = byName.get(name)!;
    const result: ParameterResult = { ...withInterval(e.value, e.error), state: e.state };
    if (set.expressions[i]) result.expression = set.expressions[i];
    const free = set.freeNames.indexOf(name);
    if (free >= 0) {
      if (Number.isFinite(set.lowerFree[free])) result.lower = set.lowerFree[free];
      if (Number.isFinite(set.upperFree[free])) result.upper = set.upperFree[free];
    }
    params[name] = result;
  }
  const shells: ShellResult[] = [];
  problem.datasets.forEach((d, di) => {
    d.spec.paths.forEach((path, pi) => {
      const get = (q: string): ValueWithError => {
        const e = byName.get(`_d${di}_p${pi}_${q}`)!;
        return withInterval(e.value, e.error);
      };
      shells.push({ dataset: d.spec.name, id: path.id, species: path.scatterer, r0: path.r, n: get('n'), r: get('r'), msrd: get('msrd'), c3: get('c3'), c4: get('c4') });
    });
  });
  const correlations: { a: string; b: string; value: number }[] = [];
  const nFree = set.freeNames.length;
  if (stats.correlation) {
    for (let a = 0; a < nFree; a++) {
      for (let b = a + 1; b < nFree; b++) {
        const c = stats.correlation[a * nFree + b];
        if (Math.abs(c) >= 0.5) correlations.push({ a: set.freeNames[a], b: set.freeNames[b], value: c });
      }
    }
  }
  correlations.sort((x, y) => Math.abs(y.value) - Math.abs(x.value));
  const warnings = stats.warnings.map((w) => w.message);
  if (fit.status !== 'converged') warnings.unshift(`the fit did not converge: ${fit.message}`);
  const plausibility = plausibilityWarnings({
    status: { converged: fit.status === 'converged', message: fit.message },
    params,
    shells,
    datasets: problem.datasets.map((d, di) => ({
      name: d.spec.name, s0sq: byName.get(`_d${di}_s0sq`)!.value, e0: byName.get(`_d${di}_e0`)!.value,
      s0sqExpression: d.spec.s0sq ?? 's0sq', e0Expression: d.spec.e0 ?? 'e0',
    })),
  });
  // convergence and bounds already have their messages above
  warnings.push(...plausibility.filter((w) => w.code !== 'not-converged' && w.code !== 'at-bound').map((w) => w.message));
  return {
    status: { code: fit.status, converged: fit.status === 'converged', message: fit.message, iterations: fit.iterations, evaluations: fit.evaluations },
    stats: {
      rFactor: stats.rFactor, chiSquare: stats.chiSquare, reducedChiSquare: stats.reducedChiSquare, nIndependent: stats.nIndependent,
      nVaried: stats.nVaried, nPoints: stats.nPoints, degreesOfFreedom: stats.degreesOfFreedom, aic: stats.aic, bic: stats.bic,
      errorMethod: propagated ? 'propagated' : 'scaled-covariance',
      ...(propagated ? { misfitRatio: propagated.misfitRatio } : {}),
      effectiveDegreesOfFreedom,
      intervalLevel: INTERVAL_LEVEL,
    },
    params,
    shells,
    correlations,
    warnings,
    plausibility,
    curves: problem.curves(fit.params),
    provenance: makeProvenance({ stage: 'fit', ...settings, refine: options }, inputs),
  };
}
