/**
 * One structure against one reduced spectrum with the default recipe: the front door that the
 * `fit` command and the ranking use.
 */
import type { InputRecord } from '../../core/provenance';
import { tablesForPaths } from '../../model/tables';
import type { PathSet } from '../../paths/pathset';
import { approximateTablesWarnings, type ScatteringProvider } from '../../scatter/provider';
import type { WindowShape } from '../../numeric/window';
import type { Chi } from '../../reduce/index';
import { InputError } from '../../core/errors';
import { buildExafsProblem, type FitDomain } from './problem';
import { defaultRecipe } from './recipe';
import { refine, type ExafsFitResult } from './refine';

export interface StructureFitSettings {
  kRange: [number, number];
  rRange: [number, number];
  kWeightings: number[];
  fitIn: FitDomain;
  s0sq: number | 'free';
  kTaper: { shape: WindowShape; taper: number };
  rTaper: { shape: WindowShape; taper: number };
  pathMargin: number;
  starts: number;
  maxIterations: number;
}

export const DEFAULT_FIT_SETTINGS: StructureFitSettings = {
  kRange: [3, 14],
  rRange: [1, 3.2],
  kWeightings: [2],
  fitIn: 'R',
  s0sq: 0.9,
  kTaper: { shape: 'hann', taper: 1 },
  rTaper: { shape: 'hann', taper: 0.5 },
  pathMargin: 0.5,
  starts: 1,
  maxIterations: 200,
};

export interface StructureFitResult extends ExafsFitResult {
  recipe: string[];
  settings: StructureFitSettings & { provider: string };
}

export function fitStructure(chi: Chi, pathSet: PathSet, provider: ScatteringProvider, settings: Partial<StructureFitSettings> = {}, inputs: InputRecord[] = [], name = 'data'): StructureFitResult {
  const s: StructureFitSettings = { ...DEFAULT_FIT_SETTINGS, ...settings };
  checkEdgeMatches(chi, pathSet, name);
  const recipe = defaultRecipe(pathSet, { rMax: s.rRange[1], pathMargin: s.pathMargin, s0sq: s.s0sq });
  const tables = tablesForPaths(pathSet, recipe.paths, provider, s.kRange[1] + s.kTaper.taper);
  const problem = buildExafsProblem(recipe.parameters, [{
    name, k: chi.k, chi: chi.chi, noiseChi: chi.noise.k, paths: recipe.paths, tables, rules: recipe.rules,
    kRange: s.kRange, kWeightings: s.kWeightings, kTaper: s.kTaper, rRange: s.rRange, rTaper: s.rTaper, fitIn: s.fitIn,
  }]);
  const used = { ...s, provider: provider.name };
  const result = refine(problem, { starts: s.starts, maxIterations: s.maxIterations }, { ...used, recipe: recipe.description }, [...inputs, { role: 'paths', sha256: pathSet.provenance.id }]);
  return { ...result, warnings: [...result.warnings, ...approximateTablesWarnings(tables)], recipe: recipe.description, settings: used };
}

/** The data's element and edge (when the file states them) must be the model's absorber and edge. */
export function checkEdgeMatches(chi: Chi, pathSet: PathSet, name: string): void {
  if (chi.element && chi.element !== pathSet.absorber) {
    throw new InputError(`the data are a ${chi.element} ${chi.edge ?? ''} spectrum but the model's absorber is ${pathSet.absorber}`.replace('  ', ' '), { file: name, key: '--absorber' });
  }
  if (chi.edge && chi.edge !== pathSet.edge) {
    throw new InputError(`the data are a ${chi.edge} edge but the model uses the ${pathSet.edge} edge`, { file: name, key: '--edge' });
  }
}
