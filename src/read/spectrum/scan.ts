/**
 * The Scan type: one measured absorption scan, mu(E) on an increasing energy grid, with every
 * channel of the file, its metadata, and a record of how it was read and processed.
 *
 * Scans are immutable: the factory copies the arrays it is given, the objects are frozen, and
 * every operation (energy shift, point removal) returns a new Scan. Typed arrays cannot be frozen
 * in JavaScript; callers must treat `energy`, `mu`, `muReference` and `channels` as read-only.
 */
import { InputError } from '../../core/errors';
import type { EdgeName } from '../../elements/index';

/** How mu was obtained from the file's channels. */
export type ScanSignal = 'transmission' | 'fluorescence' | 'mu';

/** Roles a column can play. */
export type ColumnRole = 'energy' | 'angle' | 'incident' | 'transmitted' | 'fluorescence' | 'reference' | 'mu' | 'muReference';

/** How the energy axis was found and converted. */
export interface EnergyAxisReport {
  /** Unit of the energy column in the file ('deg' for a monochromator angle). */
  unit: 'eV' | 'keV' | 'deg';
  /** What decided the unit: the file's column unit, the column label, the values' range, or an option. */
  source: 'column unit' | 'label' | 'values' | 'option';
  /** One human-readable sentence, e.g. "energy column 'energy' in eV (column unit)". */
  detail: string;
}

/** A processing step applied after reading. */
export type ScanStep =
  | { step: 'reverse'; reason: string }
  | { step: 'calibrate'; shiftEv: number; referenceE0: number; tabulatedEdge: number; source: string }
  | { step: 'shift'; shiftEv: number; reason: string }
  | { step: 'merge'; scans: { file: string | null; sha256: string | null; shiftEv: number; weight: number }[]; alignedOn: string; energyRange: [number, number] }
  | { step: 'deglitch'; removed: { energy: number; line: number; reason: 'flagged' | 'detected' }[] };

export interface ScanInfo {
  /** Path of the file read, or null for a scan made in memory. */
  file: string | null;
  /** SHA-256 of the file text (null for in-memory scans). */
  sha256: string | null;
  /** Reader that produced it ('xdi', 'columns', 'memory', 'merge'). */
  format: string;
  /** Absorbing element (canonical symbol), or null when the file does not say (validly). */
  element: string | null;
  /** Absorption edge, or null when absent or not one shellrank models. */
  edge: EdgeName | null;
  signal: ScanSignal;
  /** How mu was computed, e.g. "ln(i0/itrans)". */
  muFormula: string;
  /** Label of the column used for each role. */
  roles: Partial<Record<ColumnRole, string>>;
  energyAxis: EnergyAxisReport;
  /** Metadata fields of the file (XDI Family.key -> value). */
  fields: Readonly<Record<string, string>>;
  comments: string;
  /** Reader warnings, each one line naming file and line. */
  warnings: readonly string[];
  /** Processing steps since reading, in order. */
  history: readonly ScanStep[];
}

export interface Scan {
  /** Photon energy in eV, strictly increasing. */
  readonly energy: Float64Array;
  /** Absorption mu(E) (arbitrary units), same length as energy. */
  readonly mu: Float64Array;
  /** Reference-channel absorption (for energy calibration), or null. */
  readonly muReference: Float64Array | null;
  /** Every column of the file by label (energy column converted to eV), same length as energy. */
  readonly channels: Readonly<Record<string, Float64Array>>;
  /** 1-based source line of each point in the file (0 for points made in memory). */
  readonly lines: Int32Array;
  readonly info: ScanInfo;
}

export interface ScanInit {
  energy: ArrayLike<number>;
  mu: ArrayLike<number>;
  muReference?: ArrayLike<number> | null;
  channels?: Record<string, ArrayLike<number>>;
  lines?: ArrayLike<number>;
  info?: Partial<ScanInfo>;
}

/** Smallest number of points a scan may have. */
export const MIN_SCAN_POINTS = 8;

const DEFAULT_AXIS: EnergyAxisReport = { unit: 'eV', source: 'option', detail: 'energy in eV (given in memory)' };

/**
 * Validating factory. Checks: equal lengths (naming both), finite values, strictly increasing
 * energy (naming the data line of the first offence), at least {@link MIN_SCAN_POINTS} points.
 * @throws InputError naming the file and data line.
 */
export function makeScan(init: ScanInit): Scan {
  const file = init.info?.file ?? undefined;
  const where = { file: file ?? undefined };
  const n = init.energy.length;
  const energy = Float64Array.from(init.energy);
  const mu = Float64Array.from(init.mu);
  const lines = init.lines ? Int32Array.from(init.lines) : new Int32Array(n);
  const at = (i: number) => ({ file: file ?? undefined, line: lines[i] > 0 ? lines[i] : undefined });
  if (mu.length !== n) throw new InputError(`mu has ${mu.length} values but energy has ${n}`, where);
  if (lines.length !== n) throw new InputError(`lines has ${lines.length} values but energy has ${n}`, where);
  if (n < MIN_SCAN_POINTS) throw new InputError(`a scan needs at least ${MIN_SCAN_POINTS} points, got ${n}`, where);
  const muReference = init.muReference ? Float64Array.from(init.muReference) : null;
  if (muReference && muReference.length !== n) throw new InputError(`muReference has ${muReference.length} values but energy has ${n}`, where);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(energy[i])) throw new InputError(`energy is not a finite number (${energy[i]})`, at(i));
    if (!Number.isFinite(mu[i])) throw new InputError(`mu is not a finite number (${mu[i]})`, at(i));
    if (muReference && !Number.isFinite(muReference[i])) throw new InputError(`reference mu is not a finite number (${muReference[i]})`, at(i));
    if (i > 0 && !(energy[i] > energy[i - 1])) {
      const prev = lines[i - 1] > 0 ? `line ${lines[i - 1]}` : `point ${i}`;
      const what = energy[i] === energy[i - 1] ? `repeats the energy of ${prev}` : `lies below the ${energy[i - 1]} eV of ${prev}`;
      throw new InputError(`energies must increase: ${energy[i]} eV ${what}`, at(i));
    }
  }
  const channels: Record<string, Float64Array> = {};
  for (const [name, values] of Object.entries(init.channels ?? {})) {
    if (values.length !== n) throw new InputError(`channel '${name}' has ${values.length} values but energy has ${n}`, where);
    channels[name] = Float64Array.from(values);
  }
  const src = init.info ?? {};
  const info: ScanInfo = Object.freeze({
    file: src.file ?? null,
    sha256: src.sha256 ?? null,
    format: src.format ?? 'memory',
    element: src.element ?? null,
    edge: src.edge ?? null,
    signal: src.signal ?? 'mu',
    muFormula: src.muFormula ?? 'mu',
    roles: Object.freeze({ ...(src.roles ?? {}) }),
    energyAxis: Object.freeze({ ...(src.energyAxis ?? DEFAULT_AXIS) }),
    fields: Object.freeze({ ...(src.fields ?? {}) }),
    comments: src.comments ?? '',
    warnings: Object.freeze([...(src.warnings ?? [])]),
    history: Object.freeze([...(src.history ?? [])]),
  });
  return Object.freeze({ energy, mu, muReference, channels: Object.freeze(channels), lines, info });
}

/** A new scan with every energy (and the energy channel) moved by `shiftEv` eV. */
export function shiftScanEnergy(scan: Scan, shiftEv: number, step: ScanStep): Scan {
  const energy = scan.energy.map((e) => e + shiftEv);
  const channels: Record<string, Float64Array> = { ...scan.channels };
  const energyLabel = scan.info.roles.energy;
  if (energyLabel && channels[energyLabel]) channels[energyLabel] = channels[energyLabel].map((e) => e + shiftEv);
  return makeScan({ ...scan, energy, channels, info: { ...scan.info, history: [...scan.info.history, step] } });
}

/** A new scan without the points at the given indices (0-based). */
export function removeScanPoints(scan: Scan, indices: readonly number[], step: ScanStep): Scan {
  const drop = new Set(indices);
  const keep: number[] = [];
  for (let i = 0; i < scan.energy.length; i++) if (!drop.has(i)) keep.push(i);
  const pick = (a: Float64Array) => Float64Array.from(keep, (i) => a[i]);
  const channels: Record<string, Float64Array> = {};
  for (const [k, v] of Object.entries(scan.channels)) channels[k] = pick(v);
  return makeScan({
    energy: pick(scan.energy),
    mu: pick(scan.mu),
    muReference: scan.muReference ? pick(scan.muReference) : null,
    channels,
    lines: Int32Array.from(keep, (i) => scan.lines[i]),
    info: { ...scan.info, history: [...scan.info.history, step] },
  });
}
