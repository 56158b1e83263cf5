/**
 * The ScatteringProvider contract: for one absorber-scatterer pair at one distance, give the
 * effective backscattering amplitude |F(k)|, the total phase and the mean free path on a
 * k grid. The EXAFS model (src/model/exafs.ts) consumes these as
 *   chi_j(k) = S0^2 N_j |f_j(k)| / (k R_j^2) exp(-2 k^2 sigma_j^2) exp(-2 R_j / lambda(k))
 *              * sin(2 k R_j + phase_j(k)),
 * so `phase` is everything inside the sine except 2kR (central-atom 2 delta_l, the (-1)^l sign
 * as -l pi, and the scatterer's phase).
 *
 * Providers are registered by name; asking for one that does not exist is an InputError.
 */
import { InputError } from '../core/errors';
import type { EdgeName } from '../elements/index';
import type { PathGeometry } from './multiple-scattering';

/** One neighbour shell around a site, used by providers that build cluster potentials. */
export interface NeighbourSpec {
  species: string;
  /** Å */
  distance: number;
  /** Number of such neighbours (may be fractional). */
  count: number;
}

export interface ScatteringRequest {
  absorber: string;
  scatterer: string;
  edge: EdgeName;
  /** Absorber-scatterer distance, Å. */
  distance: number;
  /** k grid, 1/Å, increasing, >= 0. */
  k: Float64Array;
  /**
   * Neighbours around the absorber and around each scatterer species (for overlapped-density
   * potentials). Optional: providers that do not need it ignore it.
   */
  environment?: {
    absorber: NeighbourSpec[];
    scatterers: Record<string, NeighbourSpec[]>;
  };
}

export interface ScatteringTableInfo {
  provider: string;
  /** True for providers that are not first-principles (tests and benchmarks only). */
  approximate: boolean;
  settings: Record<string, unknown>;
  /** Hash of the request and settings that made this table. */
  hash: string;
}

export interface ScatteringTable {
  k: Float64Array;
  /** |F(k)| in Å. */
  amplitude: Float64Array;
  /** Total phase (radians), continuous in k. */
  phase: Float64Array;
  /** Photoelectron mean free path lambda(k), Å. */
  meanFreePath: Float64Array;
  info: ScatteringTableInfo;
}

export interface ScatteringProvider {
  /** Registry name, e.g. "parametric", "firstPrinciples". */
  readonly name: string;
  /** One line for `--help` and reports. */
  readonly describe: string;
  /** True for a provider whose tables are not first-principles (as their `info.approximate`). */
  readonly approximate?: boolean;
  compute(request: ScatteringRequest): ScatteringTable;
  /**
   * Optional: tables of multiple-scattering paths (./multiple-scattering), one per path, for the
   * model with R = L / 2 and N = the path's degeneracy. The request's scatterer and distance name
   * one single-scattering shell of the same environment. Providers without it cannot add
   * multiple-scattering paths.
   */
  computeMultiple?(request: ScatteringRequest, paths: readonly PathGeometry[]): ScatteringTable[];
}

/** Check a table's shape against its request; providers call this before returning. */
export function checkTable(table: ScatteringTable, request: ScatteringRequest): ScatteringTable {
  const n = request.k.length;
  for (const [name, column] of [['amplitude', table.amplitude], ['phase', table.phase], ['meanFreePath', table.meanFreePath]] as const) {
    if (column.length !== n) throw new RangeError(`provider ${table.info.provider}: ${name} has ${column.length} values for ${n} k points`);
  }
  return table;
}

/** A small name -> provider registry (no global state: callers build and pass it). */
export class ProviderRegistry {
  private readonly providers = new Map<string, ScatteringProvider>();
  register(provider: ScatteringProvider): this {
    this.providers.set(provider.name, provider);
    return this;
  }
  get(name: string): ScatteringProvider {
    const p = this.providers.get(name);
    if (!p) throw new InputError(`unknown scattering provider '${name}' (known: ${[...this.providers.keys()].join(', ')})`, { key: '--provider' });
    return p;
  }
  names(): string[] {
    return [...this.providers.keys()];
  }
}

/**
 * The warning every result computed with approximate scattering functions carries: their numbers
 * look like real ones but are not.
 */
export function approximateScatteringWarning(provider: string): string {
  return `scattering functions from the '${provider}' provider are approximate closed forms meant for tests: `
    + 'distances, msrd and S0^2 fitted with them are not physical values; use firstPrinciples for measured data';
}

/** The approximate-scattering warning for a set of tables (one per approximate provider among them). */
export function approximateTablesWarnings(tables: readonly ScatteringTable[]): string[] {
  return [...new Set(tables.filter((t) => t.info.approximate).map((t) => t.info.provider))].map(approximateScatteringWarning);
}
