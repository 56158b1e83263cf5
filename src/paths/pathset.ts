/**
 * Single-scattering shells: the absorber's neighbours grouped by species and distance, averaged
 * over absorber sites. The PathSet type holds them as scattering paths so multiple-scattering
 * paths can join later without changing consumers.
 *
 * Grouping: within one species, neighbours sorted by distance join the current shell while they
 * lie within `tolerance` of the shell's first (shortest) distance; otherwise they start a new
 * shell. A shell's width is therefore at most `tolerance`. Degeneracy of a shell, averaged over
 * absorber sites s with weights w_s (their occupancies):
 *   N = sum_s w_s sum_{j in shell, site s} occ_j / sum_s w_s,
 * and its distance is the occupancy-weighted mean; `spread` is the weighted standard deviation
 * of the distances inside it (static disorder, e.g. from MD snapshots). Common practice, no source.
 */
import { InputError } from '../core/errors';
import { makeProvenance, type Provenance } from '../core/provenance';
import type { EdgeName } from '../elements/index';
import type { NeighbourSpec } from '../scatter/provider';
import type { Cluster } from '../structure/cluster';

export interface ScatteringPath {
  /** Stable id, e.g. "Cu.1" for the first Cu shell. */
  id: string;
  kind: 'single';
  /** Number of legs (2 for single scattering). */
  legs: 2;
  scatterer: string;
  /** Mean absorber-scatterer distance, Å. */
  r: number;
  /** Degeneracy (coordination number), may be fractional. */
  degeneracy: number;
  /** Weighted standard deviation of distances inside the shell, Å. */
  spread: number;
}

export interface PathSet {
  absorber: string;
  edge: EdgeName;
  /** Number of absorber sites averaged. */
  sites: number;
  radius: number;
  tolerance: number;
  /** Sorted by r, then species. */
  paths: ScatteringPath[];
  /** Neighbour shells around the absorber and around each scatterer species (for cluster potentials). */
  environment: { absorber: NeighbourSpec[]; scatterers: Record<string, NeighbourSpec[]> };
  /** Warnings about the site average (e.g. surface sites of a finite cluster left out). */
  warnings?: string[];
  provenance: Provenance;
}

export interface ShellOptions {
  /** Maximum shell width, Å (default 0.01). */
  tolerance?: number;
  edge?: EdgeName;
}

interface Member { species: string; d: number; weight: number }

/** Group neighbours of one or more clusters (same absorber species) into shells. */
export function groupShells(clusters: readonly Cluster[], options: ShellOptions = {}): ScatteringPath[] {
  const tolerance = options.tolerance ?? 0.01;
  if (!(tolerance >= 0)) throw new InputError(`the shell tolerance must be >= 0 Å, got ${tolerance}`, { key: '--tolerance' });
  if (clusters.length === 0) return [];
  const totalWeight = clusters.reduce((s, c) => s + c.absorber.weight, 0);
  if (!(totalWeight > 0)) throw new InputError('the absorber sites have zero total occupancy');
  const bySpecies = new Map<string, Member[]>();
  for (const cluster of clusters) {
    // raw weights, divided by the total once per shell, so integer counts stay exact
    const w = cluster.absorber.weight;
    for (let i = 0; i < cluster.distances.length; i++) {
      const occ = cluster.occupancy[i];
      if (occ <= 0) continue;
      const list = bySpecies.get(cluster.species[i]) ?? [];
      list.push({ species: cluster.species[i], d: cluster.distances[i], weight: w * occ });
      bySpecies.set(cluster.species[i], list);
    }
  }
  const shells: Omit<ScatteringPath, 'id'>[] = [];
  for (const [species, members] of bySpecies) {
    members.sort((a, b) => a.d - b.d);
    let start = 0;
    while (start < members.length) {
      let end = start + 1;
      while (end < members.length && members[end].d - members[start].d <= tolerance + 1e-12) end++;
      let n = 0, sum = 0, sum2 = 0;
      for (let i = start; i < end; i++) {
        n += members[i].weight;
        sum += members[i].weight * members[i].d;
      }
      const r = sum / n;
      for (let i = start; i < end; i++) sum2 += members[i].weight * (members[i].d - r) ** 2;
      shells.push({ kind: 'single', legs: 2, scatterer: species, r, degeneracy: n / totalWeight, spread: Math.sqrt(sum2 / n) });
      start = end;
    }
  }
  shells.sort((a, b) => a.r - b.r || (a.scatterer < b.scatterer ? -1 : a.scatterer > b.scatterer ? 1 : 0));
  const counters = new Map<string, number>();
  return shells.map((s) => {
    const c = (counters.get(s.scatterer) ?? 0) + 1;
    counters.set(s.scatterer, c);
    return { id: `${s.scatterer}.${c}`, ...s };
  });
}

/** Neighbour list (species, distance, count) of shells, for cluster-potential construction. */
export function neighbourSpecs(paths: readonly ScatteringPath[], maxDistance: number): NeighbourSpec[] {
  return paths.filter((p) => p.r <= maxDistance).map((p) => ({ species: p.scatterer, distance: p.r, count: p.degeneracy }));
}

export interface PathSetInputs {
  /** Clusters around the absorber sites. */
  clusters: readonly Cluster[];
  /** Clusters around one representative atom of each scatterer species (for the environment). */
  scattererClusters?: Readonly<Record<string, Cluster>>;
  /** Content hash of the structure file, for provenance. */
  structureHash?: string;
  structureFile?: string;
}

/** Build the PathSet from absorber clusters (and optionally scatterer environments). */
export function buildPathSet(inputs: PathSetInputs, options: ShellOptions & { environmentRadius?: number } = {}): PathSet {
  const { clusters } = inputs;
  if (clusters.length === 0) throw new InputError('no absorber sites to build shells around');
  const tolerance = options.tolerance ?? 0.01;
  const edge = options.edge ?? 'K';
  const environmentRadius = options.environmentRadius ?? 5;
  const paths = groupShells(clusters, { tolerance });
  const scatterers: Record<string, NeighbourSpec[]> = {};
  for (const [species, cluster] of Object.entries(inputs.scattererClusters ?? {})) {
    scatterers[species] = neighbourSpecs(groupShells([cluster], { tolerance }), environmentRadius);
  }
  const absorber = clusters[0].absorber.species;
  return {
    absorber,
    edge,
    sites: clusters.length,
    radius: clusters[0].radius,
    tolerance,
    paths,
    environment: { absorber: neighbourSpecs(paths, environmentRadius), scatterers },
    provenance: makeProvenance(
      { stage: 'paths', absorber, edge, radius: clusters[0].radius, tolerance, environmentRadius, sites: clusters.map((c) => c.absorber.index) },
      inputs.structureHash ? [{ role: 'structure', file: inputs.structureFile, sha256: inputs.structureHash }] : [],
    ),
  };
}
