/**
 * Running a prepared study (./compile.ts): the refinement of src/fit/exafs/refine.ts on every data
 * set at once, and its JSON document in the same layout as the `fit` command's
 * (src/fit/exafs/document.ts), extended for several data sets:
 *   - `data`, `structure`, `curves` describe the first data set (what a one-data-set reader and
 *     the report stage expect); `datasetCurves` holds one curve record per data set with that
 *     data set's own window, R range and first k-weight;
 *   - `datasets`: per data set {name, data, structure, settings, shells};
 *   - `study`: {file, sha256, title}.
 * A study with one data set and no rules gives the same numbers as `shellrank fit` with the same
 * settings (the default recipe is reproduced exactly, parameter order included).
 */
import { curvesOf, fitDocument } from '../exafs/document';
import type { StructureFitResult, StructureFitSettings } from '../exafs/fit-structure';
import { DEFAULT_FIT_SETTINGS } from '../exafs/fit-structure';
import { refine, type ExafsFitResult } from '../exafs/refine';
import type { PreparedStudy } from './compile';

export interface StudyFitResult extends StructureFitResult {
  /** Per data set: its own settings. */
  datasetSettings: (StructureFitSettings & { name: string; temperature?: number })[];
}

/** Refine a prepared study. Non-convergence is a status in the result (as for `fit`). */
export function runStudy(prepared: PreparedStudy): StudyFitResult {
  const { study } = prepared;
  const s0sq = prepared.parameters.find((p) => p.name === 's0sq');
  const s0sqSetting: number | 'free' = s0sq === undefined ? DEFAULT_FIT_SETTINGS.s0sq : s0sq.state === 'fixed' && s0sq.value !== undefined ? s0sq.value : 'free';
  const datasetSettings = prepared.datasets.map((ds) => {
    const d = ds.settings;
    return {
      name: d.name,
      ...DEFAULT_FIT_SETTINGS,
      kRange: d.kRange, rRange: d.rRange, kWeightings: d.kWeightings, fitIn: d.fitIn, s0sq: s0sqSetting,
      kTaper: d.kTaper, rTaper: d.rTaper, starts: prepared.refine.starts, maxIterations: prepared.refine.maxIterations,
      ...(d.temperature !== undefined ? { temperature: d.temperature } : {}),
    };
  });
  const { name: _name, temperature: _t, ...first } = datasetSettings[0];
  const settings = { ...first, provider: prepared.provider.name };
  const result: ExafsFitResult = refine(
    prepared.problem,
    { starts: prepared.refine.starts, seed: prepared.refine.seed, maxIterations: prepared.refine.maxIterations },
    { study: { file: study.file, sha256: study.sha256, input: study.input }, provider: prepared.provider.name, recipe: prepared.description },
    prepared.inputs,
  );
  return { ...result, warnings: [...result.warnings, ...prepared.warnings], recipe: prepared.description, settings, datasetSettings };
}

/** The JSON document of a study fit (see the module comment). */
export function studyDocument(result: StudyFitResult, prepared: PreparedStudy) {
  const first = prepared.datasets[0];
  const base = fitDocument(result, { data: first.data, structure: first.structure });
  const datasetCurves = result.curves.map((_, i) => curvesOf(result, i, result.datasetSettings[i]));
  return {
    ...base,
    // the data set of each shell (a study may refine the same shell id in several data sets)
    shells: base.shells.map((s, i) => ({ dataset: result.shells[i].dataset, ...s })),
    datasetCurves,
    datasets: prepared.datasets.map((ds, i) => {
      const chi = ds.data.chi;
      return {
        name: ds.settings.name,
        data: {
          file: ds.data.file, sha256: ds.data.sha256, reducedHere: ds.data.reducedHere, element: chi.element, edge: chi.edge,
          e0: chi.e0, edgeStep: chi.edgeStep, noise: chi.noise, reduction: ds.data.reducedHere ? chi.info.reduction : undefined,
        },
        structure: ds.structure,
        settings: result.datasetSettings[i],
        shells: ds.shells.map((s) => ({ id: s.path.id, species: s.path.scatterer, r0: s.path.r, n0: s.path.degeneracy, rules: s.expressions })),
      };
    }),
    study: { file: prepared.study.file, sha256: prepared.study.sha256, title: prepared.study.input.title },
  };
}

export type StudyDocument = ReturnType<typeof studyDocument>;
