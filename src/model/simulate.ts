/**
 * Simulated spectra: chi(k) of a PathSet with one set of parameters, every path's scattering table
 * from a provider, sigma^2 given or from the correlated Debye / Einstein model, and |chi(R)|.
 */
import { InputError } from '../core/errors';
import { makeProvenance, type Provenance } from '../core/provenance';
import { elementBySymbol } from '../elements/index';
import { forwardTransform, magnitude, uniformGrid } from '../numeric/fourier';
import type { WindowSpec } from '../numeric/window';
import type { PathSet, ScatteringPath } from '../paths/pathset';
import type { ScatteringProvider, ScatteringTable } from '../scatter/provider';
import { correlatedDebyeMsrd, einsteinMsrd, reducedMass } from './disorder';
import { evaluateModel, type ModelParameters } from './exafs';
import { tablesForPaths } from './tables';

/** How sigma^2 is set for every path. */
export type DisorderSpec =
  | { kind: 'fixed'; msrd: number }
  | { kind: 'debye'; debyeTemperature: number; temperature: number; density: number }
  | { kind: 'einstein'; einsteinTemperature: number; temperature: number };

export interface SimulateSettings {
  /** k grid of the output (default 0..20 step 0.05 1/Å). */
  kMin?: number;
  kMax?: number;
  kStep?: number;
  s0sq?: number;
  e0?: number;
  disorder: DisorderSpec;
  /** k-weight and window for |chi(R)|. */
  kWeighting?: number;
  window?: WindowSpec;
  /** Only paths with r <= rMax (Å) are included (default: all). */
  rMax?: number;
}

export interface SimulatedSpectrum {
  k: Float64Array;
  chi: Float64Array;
  /** Contribution of every included path. */
  perPath: Float64Array[];
  paths: (ScatteringPath & { msrd: number })[];
  r: Float64Array;
  chiRMagnitude: Float64Array;
  /** The scattering tables used (same order as paths). */
  tables: ScatteringTable[];
  settings: Required<Omit<SimulateSettings, 'rMax'>> & { rMax: number | null; provider: string };
  provenance: Provenance;
}

/** sigma^2 of one path under a disorder spec. */
export function pathMsrd(spec: DisorderSpec, absorber: string, path: ScatteringPath): number {
  if (spec.kind === 'fixed') {
    if (!(spec.msrd >= 0)) throw new InputError(`msrd must be >= 0 Å^2, got ${spec.msrd}`, { key: '--msrd' });
    return spec.msrd;
  }
  const mu = reducedMass(elementBySymbol(absorber).weight, elementBySymbol(path.scatterer).weight);
  if (spec.kind === 'einstein') return einsteinMsrd(mu, spec.einsteinTemperature, spec.temperature);
  return correlatedDebyeMsrd(mu, spec.debyeTemperature, spec.temperature, path.r, spec.density);
}

export function simulateSpectrum(pathSet: PathSet, provider: ScatteringProvider, settings: SimulateSettings): SimulatedSpectrum {
  const kMin = settings.kMin ?? 0;
  const kMax = settings.kMax ?? 20;
  const kStep = settings.kStep ?? 0.05;
  if (!(kStep > 0) || !(kMax > kMin) || kMin < 0) throw new InputError(`bad k grid ${kMin}:${kMax} step ${kStep}`, { key: '--k' });
  const k = uniformGrid(kMin, kMax, kStep);
  const kWeighting = settings.kWeighting ?? 2;
  const window: WindowSpec = settings.window ?? { shape: 'hann', min: 3, max: Math.min(14, kMax), taper: 1 };
  const s0sq = settings.s0sq ?? 1;
  const e0 = settings.e0 ?? 0;
  const rMax = settings.rMax ?? null;
  const included = pathSet.paths.filter((p) => rMax === null || p.r <= rMax);
  if (included.length === 0) throw new InputError(`no shell lies within ${rMax} Å of the absorber`, { key: '--rmax' });
  const tables = tablesForPaths(pathSet, included, provider, kMax);
  const paths = included.map((p) => ({ ...p, msrd: pathMsrd(settings.disorder, pathSet.absorber, p) }));
  const params: ModelParameters = {
    s0sq,
    e0,
    paths: paths.map((p) => ({ n: p.degeneracy, r: p.r, msrd: p.msrd, c3: 0, c4: 0 })),
  };
  const { chi, perPath } = evaluateModel(k, tables, params, { perPath: true });
  const transform = forwardTransform(k, chi, { kWeighting, window });
  const used = { kMin, kMax, kStep, s0sq, e0, disorder: settings.disorder, kWeighting, window, rMax, provider: provider.name };
  return {
    k,
    chi,
    perPath: perPath as Float64Array[],
    paths,
    r: transform.x,
    chiRMagnitude: magnitude(transform),
    tables,
    settings: used,
    provenance: makeProvenance({ stage: 'simulate', ...used }, [{ role: 'paths', sha256: pathSet.provenance.id }]),
  };
}
