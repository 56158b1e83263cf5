/**
 * Opt-in multiple-scattering paths for the refinement stage of a ranking (`--multiple-scattering`).
 * The pre-screen stays single scattering (so with many candidates the choice of the refined top N
 * does not see these paths).
 *
 * For every component of a candidate the double-scattering and 4-leg paths of ../paths/multiple
 * are enumerated on the candidate's own clusters, their tables computed by the provider's
 * `computeMultiple` (../scatter/multiple-scattering: plane waves, exact curved waves for collinear
 * paths; the approximation is stated there), and
 * the paths whose size in the window,
 *   importance = mean over the fit k range of N |F(k)| exp(-2R / lambda(k)) / R^2,
 * is at least `minImportance` times that of the strongest single-scattering shell are kept
 * (a path-filtering criterion of the usual kind, common practice, no source; default 0.04).
 *
 * A kept path enters the recipe like a shell: N fixed at its degeneracy, R = L / 2 scaled by the
 * same expansion factor as every distance (a uniform expansion scales every leg), and a msrd
 * shared by multiple-scattering paths in bands of R like the shells' (species label `ms:<species>`,
 * so they do not share a msrd with a single-scattering shell), except collinear (focusing) paths,
 * which join the band of the shell of the atom they turn at (label = that species). No new
 * distance parameters.
 *
 * The fit module takes shells as ScatteringPath values; a multiple-scattering path is handed over
 * in that shape (id "ms3.1" etc., scatterer "ms:Cu" or, collinear, "Cu", r = L / 2, degeneracy N, no spread). Only its
 * id, scatterer label and r are read by the fit.
 */
import { InputError } from '../core/errors';
import type { EdgeName } from '../elements/index';
import { multiplePaths, type MultiplePath } from '../paths/multiple';
import type { ScatteringPath } from '../paths/pathset';
import type { ScatteringProvider, ScatteringTable } from '../scatter/provider';
import { buildClusters, type AbsorberSelector, type Cluster } from '../structure/cluster';
import { tableGrid } from '../model/tables';
import type { CandidateSpec, FrameCache, ShellSettings } from './candidates';
import type { Environment } from './tables';

/** Settings of the opt-in multiple-scattering paths (recorded in the ranking settings). */
export interface MultipleScatteringSettings {
  /** Keep paths at least this fraction of the strongest shell's importance (default 0.04). */
  minImportance: number;
  /** Include the 4-leg paths 0 -> i -> j -> i -> 0 (default true). */
  fourLeg: boolean;
}

export const DEFAULT_MULTIPLE_SCATTERING: MultipleScatteringSettings = { minImportance: 0.04, fourLeg: true };

/** Absorber clusters of every component of a candidate (same order as componentsOf). */
export function clustersOfCandidate(spec: CandidateSpec, settings: ShellSettings, cache: FrameCache): Cluster[][] {
  if (spec.kind === 'structure') {
    const changes = spec.changes ?? [];
    if (changes.some((c) => c.kind !== 'site')) {
      throw new InputError(`multiple-scattering paths need the structure's own geometry; ${spec.name} has shell changes (substitute, remove, strain)`, { key: '--multiple-scattering' });
    }
    const site = changes.find((c) => c.kind === 'site') as { kind: 'site'; index: number } | undefined;
    const absorber: AbsorberSelector = site ? { index: site.index } : settings.absorber;
    return [buildClusters(cache.get(spec.source), { absorber, radius: settings.radius })];
  }
  if (spec.kind === 'ensemble') return [spec.sources.flatMap((ref) => buildClusters(cache.get(ref), { absorber: settings.absorber, radius: settings.radius }))];
  return spec.parts.map((p) => clustersOfCandidate(p, settings, cache)[0]);
}

/** A multiple-scattering path in the shape the fit takes (see the module header). */
export function asFitPath(path: MultiplePath): ScatteringPath {
  const collinear = Math.abs(Math.abs(path.polarisation) - 1) < 1e-6 && path.cosAngles.every((c) => Math.abs(Math.abs(c) - 1) < 1e-6);
  // a collinear (focusing) path shares the msrd band of the single-scattering shell of the atom it
  // turns at: its length fluctuates with that distance, forward scattering hardly depends on the
  // atoms in between (common practice, no source)
  const turn = path.cosAngles.findIndex((c) => c < 0);
  const label = collinear && turn >= 0 ? path.species[turn] : `ms:${[...new Set(path.species)].sort().join('-')}`;
  return { id: path.id, kind: 'single', legs: 2, scatterer: label, r: path.halfLength, degeneracy: path.degeneracy, spread: 0 };
}

function importance(table: ScatteringTable, n: number, r: number, kRange: [number, number]): number {
  let sum = 0;
  let count = 0;
  for (let i = 0; i < table.k.length; i++) {
    const k = table.k[i];
    if (k < kRange[0] || k > kRange[1]) continue;
    sum += (n * table.amplitude[i] * Math.exp((-2 * r) / table.meanFreePath[i])) / (r * r);
    count++;
  }
  return count > 0 ? sum / count : 0;
}

/**
 * The kept multiple-scattering paths of one component and their tables.
 * @param shells the component's single-scattering shells in the model range, with their tables.
 */
export function multipleScatteringForComponent(
  provider: ScatteringProvider,
  clusters: readonly Cluster[],
  shells: { paths: readonly ScatteringPath[]; tables: readonly ScatteringTable[] },
  context: { absorber: string; edge: EdgeName; environment: Environment; maxHalfLength: number; kRange: [number, number]; kMax: number },
  settings: MultipleScatteringSettings,
): { paths: ScatteringPath[]; tables: ScatteringTable[]; found: number } {
  if (!provider.computeMultiple) throw new InputError(`the ${provider.name} provider cannot compute multiple-scattering paths`, { key: '--multiple-scattering' });
  if (shells.paths.length === 0) return { paths: [], tables: [], found: 0 };
  const all = multiplePaths(clusters, { maxHalfLength: context.maxHalfLength, fourLeg: settings.fourLeg });
  if (all.length === 0) return { paths: [], tables: [], found: 0 };
  const first = shells.paths[0];
  const tables = provider.computeMultiple(
    { absorber: context.absorber, scatterer: first.scatterer, edge: context.edge, distance: first.r, k: tableGrid(context.kMax), environment: context.environment },
    all,
  );
  const reference = Math.max(...shells.paths.map((p, i) => importance(shells.tables[i], p.degeneracy, p.r, context.kRange)));
  const kept: ScatteringPath[] = [];
  const keptTables: ScatteringTable[] = [];
  all.forEach((p, i) => {
    if (importance(tables[i], p.degeneracy, p.halfLength, context.kRange) >= settings.minImportance * reference) {
      kept.push(asFitPath(p));
      keptTables.push(tables[i]);
    }
  });
  return { paths: kept, tables: keptTables, found: all.length };
}
