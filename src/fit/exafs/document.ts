/**
 * The JSON document of a fit (the `fit --json` output, documented in the README):
 *   { "stats": {rFactor, chiSquare, reducedChiSquare, nIndependent, nVaried, nPoints, degreesOfFreedom, aic, bic},
 *     "params": {"s0sq": {value, error, state}, "e0": {...}, ...every user parameter},
 *     "shells": [{species, id, n, r: {value, error}, r0, msrd: {value, error}, c3, c4}],
 *     "correlations": [{a, b, value}], "warnings": [...], "recipe": [...],
 *     "plausibility": [{code, parameter?, dataset?, shell?, value, limit?, message}] (./plausibility.ts),
 *     "status": {code, converged, message, iterations, evaluations},
 *     "data": {file, sha256, reducedHere, e0, edgeStep, noise}, "structure": {file, sha256, absorber, sites},
 *     "curves": {kWeighting, k, data, model, window, rRange, shells: [{label, chi}]} (unweighted chi(k) of the first
 *     data set; "datasetCurves" holds one such record per data set), "settings": {...}, "provenance": {...} }
 * `n` of a shell is a plain number when fixed, {value, error} when varied or tied.
 */
import type { LoadedChi } from './data';
import type { StructureFitResult } from './fit-structure';
import type { ExafsFitResult } from './refine';

export interface FitDocumentContext {
  data: LoadedChi;
  structure: { file: string; sha256: string; absorber: string; sites: number; frame?: number };
}

export function fitDocument(result: StructureFitResult, context: FitDocumentContext) {
  const { chi } = context.data;
  return {
    format: 'shellrank-fit',
    formatVersion: 1,
    stats: result.stats,
    params: result.params,
    shells: result.shells.map((s) => ({
      id: s.id,
      species: s.species,
      n: s.n.error === 0 ? s.n.value : s.n,
      r0: s.r0,
      r: s.r,
      msrd: s.msrd,
      c3: s.c3,
      c4: s.c4,
    })),
    correlations: result.correlations,
    warnings: result.warnings,
    plausibility: result.plausibility,
    recipe: result.recipe,
    status: result.status,
    data: {
      file: context.data.file, sha256: context.data.sha256, reducedHere: context.data.reducedHere,
      element: chi.element, edge: chi.edge, e0: chi.e0, edgeStep: chi.edgeStep, noise: chi.noise,
      reduction: context.data.reducedHere ? chi.info.reduction : undefined,
    },
    structure: context.structure,
    // the curves of the (first) data set, in the shape the report stage reads (src/report/types.ts)
    curves: curvesOf(result, 0),
    datasetCurves: result.curves.map((_, i) => curvesOf(result, i)),
    settings: result.settings,
    provenance: result.provenance,
  };
}

export type FitDocument = ReturnType<typeof fitDocument>;

/** The window settings of one data set that its curves record. */
export interface CurveSettings {
  kWeightings: readonly number[];
  kRange: readonly [number, number] | number[];
  rRange: readonly [number, number] | number[];
  kTaper: { shape: string; taper: number };
}

/**
 * The curves of data set `index` in the shape the report reads (src/report/types.ts), with that
 * data set's own settings (default: the fit's settings).
 */
export function curvesOf(result: ExafsFitResult, index: number, s: CurveSettings = (result as StructureFitResult).settings) {
  const c = result.curves[index];
  return {
    name: c.name,
    kWeighting: s.kWeightings[0],
    k: c.k,
    data: c.data,
    model: c.model,
    window: { shape: s.kTaper.shape, min: s.kRange[0], max: s.kRange[1], taper: s.kTaper.taper },
    rRange: s.rRange,
    shells: result.shells.filter((sh) => sh.dataset === c.name).map((sh, i) => ({ label: sh.id, chi: c.perPath[i] })),
  };
}
