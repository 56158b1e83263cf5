/**
 * The `firstPrinciples` ScatteringProvider: scattering functions computed from self-consistent LDA
 * atoms, muffin-tin cluster potentials, a core/valence self-energy (Hedin-Lundqvist plasmon-pole for
 * the valence density, Dirac-Hara exchange for the core), complex phase shifts and exact curved-wave single-scattering amplitudes (./first-principles explains the
 * chain and its approximations).
 *
 * Caching:
 * - on disk, one JSON file per request in a per-user cache folder, keyed by the SHA-256 of every input
 *   (species, edge, distance, k grid, environment, settings, code version and physics revision);
 *   the folder is, first match wins: the `cacheDir` option, $SHELLRANK_CACHE_DIR,
 *   $XDG_CACHE_HOME/shellrank, ~/.cache/shellrank. Files are written atomically. `cache: false`
 *   bypasses it (neither read nor written). Each file carries a SHA-256 checksum of its columns; a
 *   damaged or edited file (checksum missing or wrong) is ignored, recomputed and rewritten.
 * - in memory, for the provider's lifetime: the solved atoms (keyed by Z, core hole and revision),
 *   and the cluster stages (muffin tins, interstitial levels, central-atom and site phase shifts)
 *   of the clusters already met, so that several shells of one structure build their cluster once.
 */
import { existsSync, readFileSync } from 'node:fs';
import { homedir } from 'node:os';
import { join } from 'node:path';
import { writeFileAtomic } from '../core/files';
import { hashOf } from '../core/hash';
import { SHELLRANK_VERSION } from '../core/provenance';
import type { EdgeName } from '../elements/index';
import {
  computeFirstPrinciples,
  DEFAULT_FIRST_PRINCIPLES_SETTINGS,
  FIRST_PRINCIPLES_REVISION,
  solveAtomIntegrals,
  type AtomSource,
  type ClusterMemo,
  type FirstPrinciplesSettings,
} from './first-principles';
import type { AtomIntegrals } from './muffin-tin';
import { multipleScatteringFunctions, type PathGeometry } from './multiple-scattering';
import { checkTable, type ScatteringProvider, type ScatteringRequest, type ScatteringTable } from './provider';

export const FIRST_PRINCIPLES_PROVIDER_NAME = 'firstPrinciples';

export interface FirstPrinciplesProviderOptions {
  /** Use the disk cache (default true). */
  cache?: boolean;
  /** Cache folder; overrides the environment. */
  cacheDir?: string;
  /** Settings overriding {@link DEFAULT_FIRST_PRINCIPLES_SETTINGS}. */
  settings?: Partial<FirstPrinciplesSettings>;
  /** Environment variables to resolve the cache folder from (default process.env). */
  env?: Record<string, string | undefined>;
}

/** The cache folder from the options and environment (see the module header for the order). */
export function resolveCacheDir(options: { cacheDir?: string; env?: Record<string, string | undefined> } = {}): string {
  if (options.cacheDir) return options.cacheDir;
  const env = options.env ?? process.env;
  if (env.SHELLRANK_CACHE_DIR) return env.SHELLRANK_CACHE_DIR;
  if (env.XDG_CACHE_HOME) return join(env.XDG_CACHE_HOME, 'shellrank');
  return join(homedir(), '.cache', 'shellrank');
}

interface CachedTable {
  format: 'shellrank-scattering-cache';
  key: string;
  k: number[];
  amplitude: number[];
  phase: number[];
  meanFreePath: number[];
  /** {@link scatteringCacheChecksum} of the record; a file whose columns do not match is recomputed. */
  checksum?: string;
}

/**
 * SHA-256 of a cache record's key and columns. It catches edits and damage to a cache file
 * (a hand-doubled amplitude would otherwise be trusted); it is no protection against someone who
 * rewrites the checksum as well.
 */
export function scatteringCacheChecksum(record: Pick<CachedTable, 'key' | 'k' | 'amplitude' | 'phase' | 'meanFreePath'>): string {
  return hashOf({ key: record.key, k: record.k, amplitude: record.amplitude, phase: record.phase, meanFreePath: record.meanFreePath });
}

/** Everything that determines a result, hashed for the cache key and the table's provenance. */
export function firstPrinciplesKey(request: ScatteringRequest, settings: FirstPrinciplesSettings): string {
  return hashOf({
    provider: FIRST_PRINCIPLES_PROVIDER_NAME,
    version: SHELLRANK_VERSION,
    revision: FIRST_PRINCIPLES_REVISION,
    absorber: request.absorber.trim().toLowerCase(),
    scatterer: request.scatterer.trim().toLowerCase(),
    edge: request.edge,
    distance: request.distance,
    k: request.k,
    environment: request.environment ?? null,
    settings,
  });
}

function readCache(path: string, key: string, n: number): CachedTable | null {
  if (!existsSync(path)) return null;
  try {
    const data = JSON.parse(readFileSync(path, 'utf8')) as CachedTable;
    if (data.format !== 'shellrank-scattering-cache' || data.key !== key) return null;
    if (data.k.length !== n || data.amplitude.length !== n || data.phase.length !== n || data.meanFreePath.length !== n) return null;
    if (data.checksum !== scatteringCacheChecksum(data)) return null;
    return data;
  } catch {
    return null;
  }
}

/** Build the provider. Each instance keeps its own in-memory atom cache. */
export function firstPrinciplesProvider(options: FirstPrinciplesProviderOptions = {}): ScatteringProvider {
  const settings: FirstPrinciplesSettings = { ...DEFAULT_FIRST_PRINCIPLES_SETTINGS, ...(options.settings ?? {}) };
  const useCache = options.cache ?? true;
  const cacheDir = resolveCacheDir(options);
  const atoms = new Map<string, AtomIntegrals>();
  const clusters: ClusterMemo = new Map();
  const atomSource: AtomSource = (z: number, coreHole: EdgeName | null) => {
    const key = hashOf({ z, coreHole, version: SHELLRANK_VERSION, revision: FIRST_PRINCIPLES_REVISION });
    let atom = atoms.get(key);
    if (!atom) {
      atom = solveAtomIntegrals(z, coreHole);
      atoms.set(key, atom);
    }
    return atom;
  };
  return {
    name: FIRST_PRINCIPLES_PROVIDER_NAME,
    describe: 'first-principles: LDA atoms, muffin-tin potentials, valence plasmon-pole self-energy with core exchange, curved-wave amplitudes',
    compute(request: ScatteringRequest): ScatteringTable {
      const key = firstPrinciplesKey(request, settings);
      const info = {
        provider: FIRST_PRINCIPLES_PROVIDER_NAME,
        approximate: false,
        settings: { ...settings, revision: FIRST_PRINCIPLES_REVISION, environment: request.environment ? 'given' : 'default' } as Record<string, unknown>,
        hash: key.slice(0, 16),
      };
      const path = join(cacheDir, `scatter-${key}.json`);
      if (useCache) {
        const hit = readCache(path, key, request.k.length);
        if (hit) {
          return checkTable(
            { k: Float64Array.from(hit.k), amplitude: Float64Array.from(hit.amplitude), phase: Float64Array.from(hit.phase), meanFreePath: Float64Array.from(hit.meanFreePath), info },
            request,
          );
        }
      }
      const result = computeFirstPrinciples(request, settings, atomSource, clusters);
      if (useCache) {
        const record: CachedTable = {
          format: 'shellrank-scattering-cache',
          key,
          k: Array.from(result.k),
          amplitude: Array.from(result.amplitude),
          phase: Array.from(result.phase),
          meanFreePath: Array.from(result.meanFreePath),
        };
        record.checksum = scatteringCacheChecksum(record);
        try {
          writeFileAtomic(path, JSON.stringify(record));
        } catch {
          // an unwritable cache folder only costs speed
        }
      }
      return checkTable({ k: result.k, amplitude: result.amplitude, phase: result.phase, meanFreePath: result.meanFreePath, info }, request);
    },
    computeMultiple(request: ScatteringRequest, paths: readonly PathGeometry[]): ScatteringTable[] {
      // not cached on disk: the expensive parts (cluster stage, phase shifts) are memoised above
      const functions = multipleScatteringFunctions(request, paths, settings, atomSource, clusters);
      return functions.map((f, i) => checkTable({
        k: Float64Array.from(request.k), amplitude: f.amplitude, phase: f.phase, meanFreePath: f.meanFreePath,
        info: {
          provider: FIRST_PRINCIPLES_PROVIDER_NAME,
          approximate: false,
          settings: { ...settings, revision: FIRST_PRINCIPLES_REVISION, multipleScattering: 'plane-wave (small-atom) approximation' } as Record<string, unknown>,
          hash: hashOf({ key: firstPrinciplesKey(request, settings), path: paths[i] }).slice(0, 16),
        },
      }, request));
    },
  };
}
