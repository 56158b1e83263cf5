/**
 * Running an EXAFS refinement and reporting it: Levenberg-Marquardt (optionally multi-start) on
 * the problem of ./problem.ts, then statistics (../statistics.ts), parameter errors by the delta
 * method for tied quantities, shells with their refined n, r, msrd, c3, c4, correlations and
 * warnings. Non-convergence is a status in the result, never an exception.
 */
import { makeProvenance, type InputRecord, type Provenance } from '../../core/provenance';
import { fitLeastSquares, type FitStatus } from '../levenberg-marquardt';
import { fitLeastSquaresMultiStart } from '../multistart';
import { fitStatistics } from '../statistics';
import type { ParameterState } from '../parameters';
import type { DatasetCurves, ExafsProblem } from './problem';

export interface RefineOptions {
  /** Number of starts (1 = the given start only; more adds seeded random starts). */
  starts?: number;
  seed?: number;
  maxIterations?: number;
}

export interface ValueWithError { value: number; error: number }

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
  warnings: string[];
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
  const lsOptions = { maxIterations: options.maxIterations ?? 200 };
  const fit = (options.starts ?? 1) > 1
    ? fitLeastSquaresMultiStart(lsProblem, { ...lsOptions, starts: options.starts, seed: options.seed ?? 1 })
    : fitLeastSquares(lsProblem, lsOptions);
  const stats = fitStatistics({
    residuals: fit.residuals,
    data: problem.data,
    noise: 1,
    nIndependent: problem.nIndependent,
    covariance: fit.covariance,
    names: set.freeNames,
    atBound: fit.atBound,
  });
  const { estimates } = set.propagate(fit.params, stats.scaledCovariance);
  const byName = new Map(estimates.map((e) => [e.name, e]));
  const params: Record<string, ParameterResult> = {};
  for (let i = 0; i < problem.userParameterCount; i++) {
    const name = set.names[i];
    const e = byName.get(name)!;
    const result: ParameterResult = { value: e.value, error: e.error, state: e.state };
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
        return { value: e.value, error: e.error };
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
  return {
    status: { code: fit.status, converged: fit.status === 'converged', message: fit.message, iterations: fit.iterations, evaluations: fit.evaluations },
    stats: {
      rFactor: stats.rFactor, chiSquare: stats.chiSquare, reducedChiSquare: stats.reducedChiSquare, nIndependent: stats.nIndependent,
      nVaried: stats.nVaried, nPoints: stats.nPoints, degreesOfFreedom: stats.degreesOfFreedom, aic: stats.aic, bic: stats.bic,
    },
    params,
    shells,
    correlations,
    warnings,
    curves: problem.curves(fit.params),
    provenance: makeProvenance({ stage: 'fit', ...settings, refine: options }, inputs),
  };
}
