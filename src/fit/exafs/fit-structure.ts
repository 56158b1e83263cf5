/**
 * One structure against one reduced spectrum with the default recipe: the front door that the
 * `fit` command and the ranking use.
 */
import type { InputRecord } from '../../core/provenance';
import { tablesForPaths } from '../../model/tables';
import type { PathSet } from '../../paths/pathset';
import type { ScatteringProvider } from '../../scatter/provider';
import type { WindowShape } from '../../numeric/window';
import type { Chi } from '../../reduce/index';
import { buildExafsProblem, type FitSpace } from './problem';
import { defaultRecipe } from './recipe';
import { refine, type ExafsFitResult } from './refine';

export interface StructureFitSettings {
  kRange: [number, number];
  rRange: [number, number];
  kWeights: number[];
  space: FitSpace;
  amp: number | 'free';
  kWindow: { shape: WindowShape; taper: number };
  rWindow: { shape: WindowShape; taper: number };
  pathMargin: number;
  starts: number;
}

export const DEFAULT_FIT_SETTINGS: StructureFitSettings = {
  kRange: [3, 14],
  rRange: [1, 3.2],
  kWeights: [2],
  space: 'r',
  amp: 0.9,
  kWindow: { shape: 'hann', taper: 1 },
  rWindow: { shape: 'hann', taper: 0.5 },
  pathMargin: 0.5,
  starts: 1,
};

export interface StructureFitResult extends ExafsFitResult {
  recipe: string[];
  settings: StructureFitSettings & { provider: string };
}

export function fitStructure(chi: Chi, pathSet: PathSet, provider: ScatteringProvider, settings: Partial<StructureFitSettings> = {}, inputs: InputRecord[] = [], name = 'data'): StructureFitResult {
  const s: StructureFitSettings = { ...DEFAULT_FIT_SETTINGS, ...settings };
  const recipe = defaultRecipe(pathSet, { rMax: s.rRange[1], pathMargin: s.pathMargin, amp: s.amp });
  const tables = tablesForPaths(pathSet, recipe.paths, provider, s.kRange[1] + s.kWindow.taper);
  const problem = buildExafsProblem(recipe.parameters, [{
    name, k: chi.k, chi: chi.chi, noiseChi: chi.noise.k, paths: recipe.paths, tables, rules: recipe.rules,
    kRange: s.kRange, kWeights: s.kWeights, kWindow: s.kWindow, rRange: s.rRange, rWindow: s.rWindow, space: s.space,
  }]);
  const used = { ...s, provider: provider.name };
  const result = refine(problem, { starts: s.starts }, { ...used, recipe: recipe.description }, [...inputs, { role: 'paths', sha256: pathSet.provenance.id }]);
  return { ...result, recipe: recipe.description, settings: used };
}
