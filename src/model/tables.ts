/**
 * Scattering tables for the paths of a PathSet, on the grid the model interpolates from
 * (0 to max(20, kMax) + 1 1/Å, step 0.05, so E0 shifts and windows never run off the end).
 */
import { uniformGrid } from '../numeric/fourier';
import type { PathSet, ScatteringPath } from '../paths/pathset';
import type { ScatteringProvider, ScatteringTable } from '../scatter/provider';

export const TABLE_K_STEP = 0.05;

export function tableGrid(kMax = 20): Float64Array {
  return uniformGrid(0, Math.max(20, kMax) + 1, TABLE_K_STEP);
}

export function tablesForPaths(pathSet: PathSet, paths: readonly ScatteringPath[], provider: ScatteringProvider, kMax = 20): ScatteringTable[] {
  const k = tableGrid(kMax);
  return paths.map((p) =>
    provider.compute({ absorber: pathSet.absorber, scatterer: p.scatterer, edge: pathSet.edge, distance: p.r, k, environment: pathSet.environment }));
}
