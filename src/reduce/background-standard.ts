/**
 * Background refined together with a model (Newville, Livins, Yacoby, Rehr and Stern, Phys. Rev.
 * B 47, 14126 (1993): a theoretical standard for the low-R part of chi(R)): reduce, fit, use the
 * fitted model chi(k) as the background's standard, reduce again and refit, until the watched
 * fit value (e.g. a first-shell distance) changes by less than `tolerance`.
 *
 * The stages stay apart: the caller passes the reduction and the fit as functions, so this
 * module depends on neither the fitting code nor the scattering provider.
 */

export interface StandardIterationOptions {
  /** Refits after the first fit; default 4. */
  maxIterations?: number;
  /** Stop when the watched value changes by less than this; default 2e-4 (Å for a distance). */
  tolerance?: number;
}

export interface StandardIteration<C, F> {
  chi: C;
  fit: F;
  /** The watched value after the plain fit and after each refit. */
  history: number[];
  converged: boolean;
}

/**
 * @param reduce chi(k) from the scan, with the background matched to `standard` (null: to zero).
 * @param fit fits chi and returns the result, its model chi(k) on the reduction's k grid
 *   (from k = 0; shorter arrays are zero beyond their end) and the value to watch.
 */
export function refineBackgroundWithModel<C, F>(
  reduce: (standard: Float64Array | null) => C,
  fit: (chi: C) => { result: F; model: Float64Array; value: number },
  options: StandardIterationOptions = {},
): StandardIteration<C, F> {
  const maxIterations = options.maxIterations ?? 4;
  const tolerance = options.tolerance ?? 2e-4;
  let chi = reduce(null);
  let current = fit(chi);
  const history = [current.value];
  let converged = false;
  for (let it = 0; it < maxIterations && !converged; it++) {
    chi = reduce(current.model);
    current = fit(chi);
    history.push(current.value);
    converged = Math.abs(history[history.length - 1] - history[history.length - 2]) < tolerance;
  }
  return { chi, fit: current.result, history, converged };
}
