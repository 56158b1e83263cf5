/**
 * The Structure type: one frame of atoms, held as equal-length columns.
 *
 * positions are Cartesian, in Å, packed as [x0, y0, z0, x1, y1, z1, ...].
 * lattice (when known) holds the three cell vectors as rows, in Å:
 * [a_x, a_y, a_z, b_x, b_y, b_z, c_x, c_y, c_z].
 */
import { InputError } from '../core/errors';

export interface StructureInfo {
  /** Path of the file the frame came from, if any. */
  file?: string;
  /** Name of the format that read it (a key of the reader registry). */
  format?: string;
  /** 0-based frame index within a multi-frame file. */
  frame?: number;
  /** Title, comment line or data block name. */
  title?: string;
  /** Free key/value metadata from the file (e.g. extended-XYZ comment keys). */
  extra?: Record<string, string>;
}

export interface Structure {
  /** Element symbol of each atom, canonical case ("Cu", "O"). */
  readonly species: readonly string[];
  /** Cartesian positions in Å, 3 per atom. */
  readonly positions: Float64Array;
  /** Site occupancy of each atom, 1 unless the file says otherwise. */
  readonly occupancy: Float64Array;
  /** Site label of each atom (CIF _atom_site_label, PDB atom name, or species + 1-based index). */
  readonly labels: readonly string[];
  /** Cell vectors as rows (9 numbers, Å), or null for a finite cluster. */
  readonly lattice: Float64Array | null;
  readonly info: StructureInfo;
}

export interface StructureInit {
  species: readonly string[];
  positions: Float64Array | readonly number[];
  occupancy?: Float64Array | readonly number[];
  labels?: readonly string[];
  lattice?: Float64Array | readonly number[] | null;
  info?: StructureInfo;
}

/** Validating factory: checks column lengths, finiteness and the lattice. */
export function makeStructure(init: StructureInit): Structure {
  const n = init.species.length;
  const where = { file: init.info?.file };
  const positions = Float64Array.from(init.positions);
  if (positions.length !== 3 * n) {
    throw new InputError(`positions hold ${positions.length} numbers but ${n} atoms need ${3 * n}`, where);
  }
  for (let i = 0; i < positions.length; i++) {
    if (!Number.isFinite(positions[i])) throw new InputError(`atom ${Math.floor(i / 3) + 1} has a non-finite coordinate`, where);
  }
  const occupancy = init.occupancy ? Float64Array.from(init.occupancy) : new Float64Array(n).fill(1);
  if (occupancy.length !== n) throw new InputError(`occupancy has ${occupancy.length} values for ${n} atoms`, where);
  for (let i = 0; i < n; i++) {
    if (!(occupancy[i] >= 0 && occupancy[i] <= 1 + 1e-6)) {
      throw new InputError(`atom ${i + 1} has occupancy ${occupancy[i]}, outside 0..1`, where);
    }
  }
  const labels = init.labels ? [...init.labels] : init.species.map((s, i) => `${s}${i + 1}`);
  if (labels.length !== n) throw new InputError(`labels has ${labels.length} entries for ${n} atoms`, where);
  let lattice: Float64Array | null = null;
  if (init.lattice) {
    lattice = Float64Array.from(init.lattice);
    if (lattice.length !== 9) throw new InputError(`a lattice needs 9 numbers, got ${lattice.length}`, where);
    const volume = cellVolume(lattice);
    if (!(Math.abs(volume) > 1e-6) || !Number.isFinite(volume)) {
      throw new InputError(`the cell vectors are degenerate (volume ${volume} Å^3)`, where);
    }
  }
  return Object.freeze({
    species: Object.freeze([...init.species]),
    positions,
    occupancy,
    labels: Object.freeze(labels),
    lattice,
    info: Object.freeze({ ...(init.info ?? {}) }),
  });
}

/** Number of atoms. */
export function atomCount(structure: Structure): number {
  return structure.species.length;
}

/** Signed volume a . (b x c) of a cell given as rows. */
export function cellVolume(lattice: Float64Array): number {
  const [ax, ay, az, bx, by, bz, cx, cy, cz] = lattice;
  return ax * (by * cz - bz * cy) - ay * (bx * cz - bz * cx) + az * (bx * cy - by * cx);
}

/**
 * Cell vectors from lattice parameters (a, b, c in Å; alpha, beta, gamma in degrees), in the
 * conventional orientation: a along x, b in the xy plane (International Tables for
 * Crystallography Vol. B, section 1.1; common practice).
 */
export function latticeFromParameters(a: number, b: number, c: number, alpha: number, beta: number, gamma: number): Float64Array {
  const rad = Math.PI / 180;
  const ca = Math.cos(alpha * rad);
  const cb = Math.cos(beta * rad);
  const cg = Math.cos(gamma * rad);
  const sg = Math.sin(gamma * rad);
  const cx = c * cb;
  const cy = (c * (ca - cb * cg)) / sg;
  const cz2 = c * c - cx * cx - cy * cy;
  if (!(cz2 > 0)) throw new InputError(`cell angles ${alpha}, ${beta}, ${gamma} do not make a cell`);
  return Float64Array.from([a, 0, 0, b * cg, b * sg, 0, cx, cy, Math.sqrt(cz2)]);
}

/** Cartesian position of fractional coordinates (u, v, w) in a cell given as rows. */
export function fractionalToCartesian(lattice: Float64Array, u: number, v: number, w: number): [number, number, number] {
  return [
    u * lattice[0] + v * lattice[3] + w * lattice[6],
    u * lattice[1] + v * lattice[4] + w * lattice[7],
    u * lattice[2] + v * lattice[5] + w * lattice[8],
  ];
}

/** Inverse of a 3x3 row-matrix (for Cartesian -> fractional). */
export function invertCell(lattice: Float64Array): Float64Array {
  const [a, b, c, d, e, f, g, h, i] = lattice;
  const det = cellVolume(lattice);
  return Float64Array.from([
    (e * i - f * h) / det, (c * h - b * i) / det, (b * f - c * e) / det,
    (f * g - d * i) / det, (a * i - c * g) / det, (c * d - a * f) / det,
    (d * h - e * g) / det, (b * g - a * h) / det, (a * e - b * d) / det,
  ]);
}
