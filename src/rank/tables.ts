/**
 * Scattering tables for many candidates: which environment a table is computed for, how finely
 * distances are told apart, and an in-memory memo so a worker computes each table once.
 *
 * A candidate's tables are a function of that candidate, the settings and the provider only,
 * never of the other candidates in the run or of file names, so a candidate scores the same alone
 * or among thousands. Work is shared only through the memo, whose key is a hash of every physics
 * input of the request (absorber, edge, scatterer, table distance, environment).
 *
 * Two policies (the ranking settings record which one was used):
 * - 'own': every shell's table is computed at its exact distance with the candidate's own
 *   neighbour environment (what the `fit` command does). The default.
 * - 'shared': distances rounded to `distanceStep` Å, for the table only (the model still uses
 *   every shell's exact distance in 2kR, 1/R^2 and exp(-2R/lambda)), and the environment either
 *   the candidate's own with its distances rounded to the same step and its counts to 0.01, or a
 *   reference environment named in the settings (a screen's base structure). The effective
 *   amplitude, phase and mean free path change slowly with distance and with the neighbours that
 *   shape the muffin-tin potential (Rehr and Albers, Rev. Mod. Phys. 72, 621 (2000), section II,
 *   for the smooth distance dependence of the curved-wave amplitude; common practice, no source,
 *   for the transfer between similar environments, the basis of the classic experimental
 *   phase-and-amplitude transfer), so candidates with nearly the same environment share tables.
 */
import { hashOf } from '../core/hash';
import type { EdgeName } from '../elements/index';
import { tableGrid } from '../model/tables';
import type { NeighbourSpec, ScatteringProvider, ScatteringTable } from '../scatter/provider';

export type TableMode = 'own' | 'shared';

/** Neighbour environment as the provider takes it. */
export interface Environment {
  absorber: NeighbourSpec[];
  scatterers: Record<string, NeighbourSpec[]>;
}

export interface TablePolicy {
  mode: TableMode;
  /** Distance rounding of shared tables, Å (0 = exact). Ignored in 'own' mode. */
  distanceStep: number;
  /**
   * Environment of shared tables: each candidate's own (rounded), or the reference named in the
   * settings (hash of it). Absent = 'candidate'.
   */
  environment?: 'candidate' | { reference: string };
}

/** How one candidate's tables were made (recorded with its result). */
export interface TableOrigin {
  mode: TableMode;
  distanceStep: number;
  /** 'own' / 'rounded' (the candidate's environment, exact or rounded) or 'reference'. */
  environment: 'own' | 'rounded' | 'reference';
  /** Hash of the environment the provider was given, per component. */
  environmentHash: string;
}

/** Round an environment's distances to `step` Å and counts to 0.01 (distance order kept). */
export function roundedEnvironment(environment: Environment, step: number): Environment {
  const r = (list: readonly { species: string; distance: number; count: number }[]) => list.map((n) => ({
    species: n.species,
    distance: step > 0 ? Number((Math.max(step, Math.round(n.distance / step) * step)).toFixed(6)) : n.distance,
    count: Math.round(n.count * 100) / 100,
  }));
  const scatterers: Record<string, { species: string; distance: number; count: number }[]> = {};
  for (const name of Object.keys(environment.scatterers).sort()) scatterers[name] = r(environment.scatterers[name]);
  return { absorber: r(environment.absorber), scatterers };
}

/** Default distance rounding of shared tables, Å (0.02 Å: under 1 % of any bond length). */
export const DEFAULT_SHARED_TABLE_STEP = 0.02;

/**
 * A memoising table source bound to one provider, policy and k range. Not shared between
 * threads: each worker builds its own (the provider's disk cache is shared).
 */
export class TableSource {
  private readonly memo = new Map<string, ScatteringTable>();
  private readonly grid: Float64Array;
  private readonly referenceKey: string;
  /** Number of tables requested from the provider (memo misses). */
  computed = 0;

  /**
   * @param reference the reference environment of 'shared' mode when the settings name one (a
   *   screen's base); null = each candidate's own environment, rounded.
   * @param kMax largest k the model needs, 1/Å.
   * @param capacity most tables kept in memory (oldest dropped first).
   */
  constructor(
    private readonly provider: ScatteringProvider,
    private readonly policy: TablePolicy,
    private readonly reference: Environment | null,
    kMax: number,
    private readonly capacity = 4000,
  ) {
    this.grid = tableGrid(kMax);
    this.referenceKey = reference ? hashOf(reference).slice(0, 16) : 'none';
  }

  /** How the tables of a candidate with this environment are made. */
  originOf(environment: Environment): TableOrigin {
    const { envKey, step } = this.resolve(environment);
    const kind = this.policy.mode === 'own' ? 'own' : this.reference ? 'reference' : 'rounded';
    return { mode: this.policy.mode, distanceStep: step, environment: kind, environmentHash: envKey };
  }

  private resolve(environment: Environment): { env: Environment; envKey: string; step: number } {
    if (this.policy.mode !== 'shared') return { env: environment, envKey: hashOf(environment).slice(0, 16), step: 0 };
    const step = this.policy.distanceStep;
    if (this.reference) return { env: this.reference, envKey: this.referenceKey, step };
    const env = roundedEnvironment(environment, step);
    return { env, envKey: hashOf(env).slice(0, 16), step };
  }

  /**
   * A lookup for the shells of one candidate (absorber, edge and environment fixed), so the
   * environment is hashed once per candidate, not once per shell.
   */
  forCandidate(absorber: string, edge: EdgeName, environment: Environment): (scatterer: string, distance: number) => ScatteringTable {
    const { env, envKey, step } = this.resolve(environment);
    return (scatterer, distance) => {
      const d = step > 0 ? Math.max(step, Math.round(distance / step) * step) : distance;
      const key = `${absorber}|${edge}|${scatterer}|${d.toFixed(6)}|${envKey}`;
      const hit = this.memo.get(key);
      if (hit) {
        // refresh its place in the insertion order (least recently used goes first)
        this.memo.delete(key);
        this.memo.set(key, hit);
        return hit;
      }
      const table = this.provider.compute({ absorber, scatterer, edge, distance: step > 0 ? Number(d.toFixed(6)) : d, k: this.grid, environment: env });
      this.computed++;
      this.memo.set(key, table);
      if (this.memo.size > this.capacity) this.memo.delete(this.memo.keys().next().value as string);
      return table;
    };
  }
}
