/**
 * Plausibility checks of a refined EXAFS fit: a fit can converge with a small R-factor and still
 * return values no physical sample has. Checked here, on the values alone (no data needed):
 * - a negative msrd (sigma^2, a mean square, cannot be below zero) of any shell;
 * - an amplitude reduction factor S0^2 outside MIN_S0SQ..MAX_S0SQ;
 * - an energy shift |e0| above MAX_ABS_E0;
 * - a fitted distance that moved more than MAX_RELATIVE_DISTANCE_SHIFT from the structure's own
 *   distance for that shell (the model's shells then no longer describe that structure);
 * - a varied parameter at (within BOUND_TOLERANCE of) one of its bounds;
 * - a fit that did not converge.
 * Each check gives a code, what it concerns (parameter, or data set and shell), the value, the
 * limit and a one-line message. A warning is a prompt to look, not a verdict: the thresholds are
 * the customary ranges of first-shell analysis, and a sample can fall outside them for real.
 */

/** Smallest accepted S0^2 (common practice, no source). */
export const MIN_S0SQ = 0.6;
/** Largest accepted S0^2 (common practice, no source). */
export const MAX_S0SQ = 1.2;
/** Largest accepted |e0| in eV (common practice, no source). */
export const MAX_ABS_E0 = 10;
/** Largest accepted |r - r0| / r0 of a shell (3 %; common practice, no source). */
export const MAX_RELATIVE_DISTANCE_SHIFT = 0.03;
/** Smallest accepted msrd in Å^2: a mean square is never negative. */
export const MIN_MSRD = 0;
/**
 * A parameter is at a bound when it lies within this fraction of the bound interval (or of
 * max(1, |bound|) for a one-sided bound) from it; the same rule as the fitter's own flag
 * (../bounds.ts, `atBound`).
 */
export const BOUND_TOLERANCE = 1e-6;

export type PlausibilityCode = 'negative-msrd' | 's0sq-range' | 'e0-range' | 'distance-shift' | 'at-bound' | 'not-converged';

export interface PlausibilityWarning {
  code: PlausibilityCode;
  /** The parameter or expression concerned (S0^2, e0, bounds), when there is one. */
  parameter?: string;
  /** Data set and shell id, for shell checks. */
  dataset?: string;
  shell?: string;
  /** The offending value (for 'distance-shift' the relative shift |r - r0| / r0; NaN for 'not-converged'). */
  value: number;
  /** The threshold or bound it crossed. */
  limit?: number;
  message: string;
}

/** What the checks read: a subset of an ExafsFitResult plus each data set's S0^2 and e0. */
export interface PlausibilityInput {
  status: { converged: boolean; message: string };
  params: Record<string, { value: number; state: string; lower?: number; upper?: number }>;
  shells: readonly { dataset: string; id: string; r0: number; r: { value: number }; msrd: { value: number } }[];
  /** Per data set: its name and the values (and expressions) of S0^2 and e0. */
  datasets: readonly { name: string; s0sq: number; e0: number; s0sqExpression?: string; e0Expression?: string }[];
}

/** All plausibility warnings of one fit, in the order: convergence, data sets, shells, bounds. */
export function plausibilityWarnings(input: PlausibilityInput): PlausibilityWarning[] {
  const out: PlausibilityWarning[] = [];
  if (!input.status.converged) {
    out.push({ code: 'not-converged', value: NaN, message: `the fit did not converge (${input.status.message}): its values are not a minimum` });
  }
  const several = input.datasets.length > 1;
  const inSet = (name: string) => (several ? ` in data set ${name}` : '');
  for (const d of input.datasets) {
    const s0sqName = d.s0sqExpression ?? 's0sq';
    if (d.s0sq < MIN_S0SQ || d.s0sq > MAX_S0SQ) {
      out.push({
        code: 's0sq-range', parameter: s0sqName, ...(several ? { dataset: d.name } : {}), value: d.s0sq, limit: d.s0sq < MIN_S0SQ ? MIN_S0SQ : MAX_S0SQ,
        message: `S0^2 (${s0sqName}) = ${d.s0sq.toFixed(3)}${inSet(d.name)} is outside ${MIN_S0SQ}-${MAX_S0SQ}: check the coordination numbers, the normalisation or the structure`,
      });
    }
    const e0Name = d.e0Expression ?? 'e0';
    if (Math.abs(d.e0) > MAX_ABS_E0) {
      out.push({
        code: 'e0-range', parameter: e0Name, ...(several ? { dataset: d.name } : {}), value: d.e0, limit: MAX_ABS_E0,
        message: `|e0| (${e0Name}) = ${Math.abs(d.e0).toFixed(2)} eV${inSet(d.name)} is above ${MAX_ABS_E0} eV: the energy reference or the distances may be off`,
      });
    }
  }
  for (const s of input.shells) {
    const where = `shell ${s.id}${inSet(s.dataset)}`;
    if (s.msrd.value < MIN_MSRD) {
      out.push({
        code: 'negative-msrd', dataset: s.dataset, shell: s.id, value: s.msrd.value, limit: MIN_MSRD,
        message: `msrd of ${where} is negative (${s.msrd.value.toFixed(5)} Å^2), which no real disorder gives`,
      });
    }
    const shift = s.r0 > 0 ? Math.abs(s.r.value - s.r0) / s.r0 : NaN;
    if (shift > MAX_RELATIVE_DISTANCE_SHIFT) {
      out.push({
        code: 'distance-shift', dataset: s.dataset, shell: s.id, value: shift, limit: MAX_RELATIVE_DISTANCE_SHIFT,
        message: `r of ${where} = ${s.r.value.toFixed(4)} Å is ${(100 * shift).toFixed(1)} % from the structure's ${s.r0.toFixed(4)} Å (more than ${100 * MAX_RELATIVE_DISTANCE_SHIFT} %)`,
      });
    }
  }
  for (const [name, p] of Object.entries(input.params)) {
    if (p.state !== 'free') continue;
    const side = boundSide(p.value, p.lower, p.upper);
    if (side) {
      const bound = side === 'lower' ? p.lower! : p.upper!;
      out.push({
        code: 'at-bound', parameter: name, value: p.value, limit: bound,
        message: `${name} = ${p.value.toPrecision(4)} is at its ${side} bound ${bound}: the data would take it further, its error is not meaningful`,
      });
    }
  }
  return out;
}

function boundSide(x: number, lower: number | undefined, upper: number | undefined): 'lower' | 'upper' | null {
  const lo = lower !== undefined && Number.isFinite(lower) ? lower : undefined;
  const hi = upper !== undefined && Number.isFinite(upper) ? upper : undefined;
  const both = lo !== undefined && hi !== undefined;
  if (lo !== undefined && x - lo <= BOUND_TOLERANCE * (both ? hi! - lo : Math.max(1, Math.abs(lo)))) return 'lower';
  if (hi !== undefined && hi - x <= BOUND_TOLERANCE * (both ? hi - lo! : Math.max(1, Math.abs(hi)))) return 'upper';
  return null;
}
