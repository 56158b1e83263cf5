/**
 * Multiple-scattering paths for the refinement stage of a ranking, on by default whenever the
 * model range (R max + margin) reaches them; `--single-scattering` turns them off. The pre-screen
 * stays single scattering (so with many candidates the choice of the refined top N does not see
 * these paths). Components without their own geometry (shell changes: substitute, remove,
 * strain), providers without multiple-scattering tables and L2/L3 edges get single scattering
 * only, and the recipe says so.
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

/** Settings of the multiple-scattering paths (recorded in the ranking settings). */
export interface MultipleScatteringSettings {
  /** Keep paths at least this fraction of the strongest shell's importance (default 0.04). */
  minImportance: number;
  /** Include the 4-leg paths 0 -> i -> j -> i -> 0 (default true). */
  fourLeg: boolean;
}

export const DEFAULT_MULTIPLE_SCATTERING: MultipleScatteringSettings = { minImportance: 0.04, fourLeg: true };

/**
 * Absorber clusters of every component of a candidate (same order as componentsOf); null for a
 * component whose shells were changed (substitute, remove, strain), which has no geometry of its
 * own to build paths from.
 */
export function clustersOfCandidate(spec: CandidateSpec, settings: ShellSettings, cache: FrameCache): (Cluster[] | null)[] {
  if (spec.kind === 'structure') {
    const changes = spec.changes ?? [];
    if (changes.some((c) => c.kind !== 'site')) return [null];
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
  clusters: readonly Cluster[] | null,
  shells: { paths: readonly ScatteringPath[]; tables: readonly ScatteringTable[] },
  context: { absorber: string; edge: EdgeName; environment: Environment; maxHalfLength: number; kRange: [number, number]; kMax: number },
  settings: MultipleScatteringSettings,
): { paths: ScatteringPath[]; tables: ScatteringTable[]; found: number; skipped?: string } {
  const none = (skipped: string) => ({ paths: [], tables: [], found: 0, skipped });
  if (!provider.computeMultiple) return none(`the ${provider.name} provider has no multiple-scattering tables`);
  if (context.edge !== 'K' && context.edge !== 'L1') return none(`multiple-scattering amplitudes are computed for K and L1 edges only, not ${context.edge}`);
  if (clusters === null) return none('changed shells have no geometry of their own');
  if (shells.paths.length === 0 || clusters.length === 0) return { paths: [], tables: [], found: 0 };
  // a user-given cluster radius may be shorter than the model range: no path leaves the cluster
  const maxHalfLength = Math.min(context.maxHalfLength, ...clusters.map((c) => c.radius));
  const all = multiplePaths(clusters, { maxHalfLength, fourLeg: settings.fourLeg });
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

/** One row of a path listing (single- and multiple-scattering paths together). */
export interface ListedPath {
  id: string;
  legs: number;
  /** Scatterers in the order visited (one for a single-scattering shell). */
  atoms: string[];
  /** Effective distance L / 2, Å. */
  rEffective: number;
  degeneracy: number;
  /** Leg lengths, Å (a shell: there and back). */
  legLengths: number[];
  /** Importance relative to the strongest single-scattering shell (see the module header). */
  importance: number;
}

export interface PathListingOptions {
  /** Most legs of a listed path: 2 (shells only), 3 or 4. */
  maxLegs: number;
  /** Longest effective distance L / 2, Å. */
  maxHalfLength: number;
  /** Drop paths below this fraction of the strongest shell's importance. */
  minImportance: number;
  /** k range over which importance is averaged, 1/Å. */
  kRange: [number, number];
}

/**
 * Every path of one absorber's clusters up to `maxLegs` legs and `maxHalfLength`, with the
 * importance rank uses to keep multiple-scattering paths, sorted by effective distance.
 * @param shells the single-scattering shells (a PathSet's paths) and their environment.
 * @returns the kept paths and how many were found before the importance cut.
 * @throws InputError for more than 4 legs, or a provider without multiple-scattering tables.
 */
export function listPaths(
  provider: ScatteringProvider,
  clusters: readonly Cluster[],
  shells: { absorber: string; edge: EdgeName; environment: Environment; paths: readonly ScatteringPath[] },
  options: PathListingOptions,
): { paths: ListedPath[]; found: number } {
  const { maxLegs, maxHalfLength, minImportance, kRange } = options;
  if (!Number.isInteger(maxLegs) || maxLegs < 2 || maxLegs > 4) throw new InputError(`the number of legs must be 2, 3 or 4 (longer paths are not enumerated), got ${maxLegs}`, { key: '--max-legs' });
  if (maxLegs > 2 && shells.edge !== 'K' && shells.edge !== 'L1') throw new InputError(`multiple-scattering paths are computed for K and L1 edges only, not ${shells.edge} (use --max-legs 2)`, { key: '--max-legs' });
  if (maxLegs > 2 && !provider.computeMultiple) throw new InputError(`the ${provider.name} provider cannot compute multiple-scattering paths (use --max-legs 2)`, { key: '--provider' });
  const kMax = kRange[1] + 1;
  const single = shells.paths.filter((p) => p.r <= maxHalfLength + 1e-9);
  const rows: ListedPath[] = [];
  const singleTables = single.map((p) => provider.compute({ absorber: shells.absorber, scatterer: p.scatterer, edge: shells.edge, distance: p.r, k: tableGrid(kMax), environment: shells.environment }));
  single.forEach((p, i) => rows.push({ id: p.id, legs: 2, atoms: [p.scatterer], rEffective: p.r, degeneracy: p.degeneracy, legLengths: [p.r, p.r], importance: importance(singleTables[i], p.degeneracy, p.r, kRange) }));
  if (maxLegs > 2 && single.length > 0 && provider.computeMultiple) {
    const all = multiplePaths(clusters, { maxHalfLength, fourLeg: maxLegs >= 4 });
    const first = single[0];
    const tables = all.length === 0 ? [] : provider.computeMultiple(
      { absorber: shells.absorber, scatterer: first.scatterer, edge: shells.edge, distance: first.r, k: tableGrid(kMax), environment: shells.environment }, all);
    all.forEach((p, i) => rows.push({ id: p.id, legs: p.legs, atoms: p.species, rEffective: p.halfLength, degeneracy: p.degeneracy, legLengths: p.legLengths, importance: importance(tables[i], p.degeneracy, p.halfLength, kRange) }));
  }
  const reference = Math.max(0, ...rows.filter((r) => r.legs === 2).map((r) => r.importance));
  for (const r of rows) r.importance = reference > 0 ? r.importance / reference : 0;
  const kept = rows.filter((r) => r.importance >= minImportance).sort((a, b) => a.rEffective - b.rEffective || a.legs - b.legs);
  return { paths: kept, found: rows.length };
}
