/**
 * From a Structure to a PathSet: clusters around the absorber sites (in a finite cluster only
 * those with complete shells, see `selectAbsorberSites`), shells, and the environments of the
 * scatterer species (neighbours of the nearest atom of each species).
 */
import { buildClusters, selectAbsorberSites, type AbsorberSelector } from '../structure/cluster';
import type { Structure } from '../structure/structure';
import type { EdgeName } from '../elements/index';
import { buildPathSet, type PathSet } from './pathset';
import type { Cluster } from '../structure/cluster';

export * from './pathset';

export interface ShellsOfStructureOptions {
  absorber: AbsorberSelector;
  /** Cluster radius, Å (default 6). */
  radius?: number;
  /** Shell width tolerance, Å (default 0.01). */
  tolerance?: number;
  edge?: EdgeName;
  /** Radius of the neighbour lists kept for cluster potentials, Å (default 5). */
  environmentRadius?: number;
  structureHash?: string;
}

export function shellsOfStructure(structure: Structure, options: ShellsOfStructureOptions): PathSet {
  // a finite cluster averages only the absorber sites whose shells are complete
  const selection = selectAbsorberSites(structure, options.absorber, options.radius ?? 6);
  const clusters = buildClusters(structure, { absorber: options.absorber, radius: options.radius, sites: selection.used });
  const environmentRadius = options.environmentRadius ?? 5;
  // one representative of each scatterer species: its nearest atom to the first absorber site
  const scattererClusters: Record<string, Cluster> = {};
  const first = clusters[0];
  const seen = new Set<string>();
  for (let i = 0; i < first.species.length; i++) {
    const s = first.species[i];
    if (seen.has(s)) continue;
    seen.add(s);
    const [around] = buildClusters(structure, { absorber: { index: first.sourceIndex[i] }, radius: environmentRadius });
    scattererClusters[s] = around;
  }
  const set = buildPathSet(
    { clusters, scattererClusters, structureHash: options.structureHash, structureFile: structure.info.file },
    { tolerance: options.tolerance, edge: options.edge, environmentRadius },
  );
  return selection.warning ? { ...set, warnings: [selection.warning] } : set;
}
