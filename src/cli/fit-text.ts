/**
 * The text summary shared by `fit` and `run`: status, statistics, parameter table, shell table,
 * warnings and the recipe.
 */
import type { ExafsFitResult } from '../fit/exafs/refine';
import { textTable } from './output';

export function fmt(x: number, digits: number): string {
  return Number.isFinite(x) ? x.toFixed(digits) : '—';
}

export interface FitTextOptions {
  /** Which parameters go in the parameter table. */
  showParameter: (name: string) => boolean;
  /** Add a data-set column to the shell table. */
  datasetColumn?: boolean;
  recipe?: readonly string[];
}

/** Lines after the header: status, statistics, tables, warnings, recipe. */
export function fitResultLines(result: ExafsFitResult, options: FitTextOptions): string[] {
  const s = result.stats;
  const several = Boolean(options.datasetColumn);
  return [
    `status: ${result.status.code} after ${result.status.iterations} iterations (${result.status.message})`,
    `R-factor ${fmt(s.rFactor, 5)}  reduced chi-square ${fmt(s.reducedChiSquare, 2)}  independent points ${fmt(s.nIndependent, 1)}  varied ${s.nVaried}`,
    errorLine(result),
    '',
    textTable(['parameter', 'value', 'error', `${level(result)} interval`, 'state'], Object.entries(result.params).filter(([n]) => options.showParameter(n))
      .map(([n, p]) => [n, fmt(p.value, 4), fmt(p.error, 4), p.interval ? `${fmt(p.interval[0], 4)} to ${fmt(p.interval[1], 4)}` : '—', p.state])),
    textTable([...(several ? ['data set'] : []), 'shell', 'species', 'n', 'r (Å)', '± r', 'r0 (Å)', 'msrd (Å^2)', '± msrd'], result.shells.map((sh) => [
      ...(several ? [sh.dataset] : []), sh.id, sh.species, fmt(sh.n.value, 2), fmt(sh.r.value, 4), fmt(sh.r.error, 4), fmt(sh.r0, 4), fmt(sh.msrd.value, 5), fmt(sh.msrd.error, 5)])),
    ...result.warnings.map((w) => `warning: ${w}`),
    ...(options.recipe ?? []).map((r) => `recipe: ${r}`),
  ];
}

function level(result: ExafsFitResult): string {
  return `${Math.round(100 * (result.stats.intervalLevel ?? 0.95))} %`;
}

/** How the errors were obtained, in one line. */
function errorLine(result: ExafsFitResult): string {
  const s = result.stats;
  if (s.errorMethod === 'propagated') {
    return `errors: data noise propagated through the fit, scaled by the misfit ratio ${fmt(s.misfitRatio ?? NaN, 2)}`
      + ` (1 = residuals at the noise level); intervals: Student t with ${fmt(s.effectiveDegreesOfFreedom ?? NaN, 1)} degrees of freedom`;
  }
  return 'errors: covariance scaled by the reduced chi-square';
}
