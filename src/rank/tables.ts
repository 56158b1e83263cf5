/**
 * Scattering tables for many candidates: which environment a table is computed for, how finely
 * distances are told apart, and an in-memory memo so a worker computes each table once.
 *
 * Two policies (the ranking settings record which one was used):
 * - 'own': every shell's table is computed at its exact distance with the candidate's own
 *   neighbour environment (what the `fit` command does). Right for a handful of candidates; for
 *   thousands of MD frames every table is new and costs a first-principles calculation.
 * - 'shared': one reference environment per run (that of the reference candidate: the first
 *   candidate, or the base structure of a screen) and distances rounded to `distanceStep` Å for
 *   the table only (the model still uses every shell's exact distance in 2kR, 1/R^2 and
 *   exp(-2R/lambda)). The effective amplitude, phase and mean free path change slowly with
 *   distance and with the neighbours that shape the muffin-tin potential (Rehr and Albers,
 *   Rev. Mod. Phys. 72, 621 (2000), section II, for the smooth distance dependence of the
 *   curved-wave amplitude; common practice, no source, for the transfer between similar
 *   environments, the basis of the classic experimental phase-and-amplitude transfer), so one
 *   table serves many candidates; this is what makes screening thousands affordable.
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
   * @param reference the shared environment ('shared' mode); null falls back to each candidate's own.
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

  /**
   * A lookup for the shells of one candidate (absorber, edge and environment fixed), so the
   * environment is hashed once per candidate, not once per shell.
   */
  forCandidate(absorber: string, edge: EdgeName, environment: Environment): (scatterer: string, distance: number) => ScatteringTable {
    const shared = this.policy.mode === 'shared' && this.reference !== null;
    const step = shared ? this.policy.distanceStep : 0;
    const env = shared ? this.reference as Environment : environment;
    const envKey = shared ? this.referenceKey : hashOf(environment).slice(0, 16);
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
