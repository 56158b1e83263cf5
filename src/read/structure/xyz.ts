/**
 * Plain XYZ structure files, single- or multi-frame.
 *
 * Each frame is an atom-count line, one free comment line, then one line per atom:
 * `Sym x y z [ignored columns]`, Cartesian coordinates in Å, species as an element symbol (any
 * case) or an atomic number. Blank lines are allowed between frames and at the end. The format
 * has no formal standard; this follows the common practice of the XYZ files written by
 * molecular-modelling programs (common practice, no source).
 *
 * The frame walker here is shared with the extended XYZ reader (./extxyz), which only differs in
 * how the comment line declares the columns. Parsing is one pass over the text with no per-atom
 * allocation beyond the (cached) species strings, so cost is linear in the file size.
 */
import { InputError } from '../../core/errors';
import type { StructureFormat } from '../registry';
import { makeStructure, type Structure, type StructureInfo } from '../../structure/structure';
import { LineCursor, SpeciesResolver, locate, parseInteger, parseReal, quote } from './text';

/** Where each per-atom quantity sits in an atom line (token indices). */
export interface XyzColumnLayout {
  /** Token index of the species. */
  species: number;
  /** Token index of x (y and z follow). */
  position: number;
  /** Token index of the occupancy, or -1. */
  occupancy: number;
  /** Token index of a site label, or -1. */
  label: number;
  /** Number of tokens an atom line must have (at least, or exactly when `exact`). */
  columns: number;
  exact: boolean;
  /** Human description of the columns for error messages. */
  describe: string;
}

/** What the comment line of a frame says (besides the column layout). */
export interface XyzFrameHeader {
  layout: XyzColumnLayout;
  lattice: Float64Array | null;
  title?: string;
  extra?: Record<string, string>;
}

/** Column layout of a plain XYZ atom line. */
export const PLAIN_XYZ_LAYOUT: XyzColumnLayout = Object.freeze({
  species: 0, position: 1, occupancy: -1, label: -1, columns: 4, exact: false,
  describe: 'species x y z',
});

/**
 * Walk all frames of an XYZ-like file. `readHeader` interprets each comment line (given with
 * its 1-based line number) and returns the column layout and frame metadata.
 *
 * @throws InputError with file and 1-based line for any malformed count, comment or atom line.
 */
export function readXyzFrames(
  text: string,
  file: string,
  format: string,
  readHeader: (comment: string, line: number) => XyzFrameHeader,
): Structure[] {
  const cursor = new LineCursor(text);
  const resolver = new SpeciesResolver();
  const frames: Structure[] = [];
  for (;;) {
    // Count line: skip blank lines between frames and at the end.
    let found = false;
    while (cursor.next()) {
      if (!cursor.isBlank()) { found = true; break; }
    }
    if (!found) break;
    const countLine = cursor.lineNumber;
    const tokens = cursor.tokenize();
    const count = tokens === 1 ? parseInteger(cursor.token(0)) : NaN;
    if (!(count >= 0)) {
      const previous = frames.length > 0
        ? ` (if this is an atom line, the atom count of frame ${frames.length} is too small)`
        : '';
      throw new InputError(`expected an atom count (one whole number), found ${quote(cursor.line().trim())}${previous}`, { file, line: countLine });
    }
    // Each atom line needs at least "H 0 0 0" and a line break: bound the count by the text left.
    if (count > (text.length - cursor.end) / 8 + 1) {
      throw new InputError(`the atom count ${count} is more than the rest of the file can hold`, { file, line: countLine });
    }
    if (!cursor.next()) {
      throw new InputError(`the file ends after the atom count; a comment line and ${count} atom lines should follow`, { file, line: countLine });
    }
    const commentLine = cursor.lineNumber;
    const header = readHeader(cursor.line(), commentLine);
    const layout = header.layout;
    const species: string[] = new Array<string>(count);
    const positions = new Float64Array(3 * count);
    const occupancy = layout.occupancy >= 0 ? new Float64Array(count) : undefined;
    const labels: string[] | undefined = layout.label >= 0 ? new Array<string>(count) : undefined;
    for (let i = 0; i < count; i++) {
      if (!cursor.next()) {
        throw new InputError(`the file ends after ${i} of the ${count} atoms announced on line ${countLine}`, { file, line: cursor.lineNumber });
      }
      const line = cursor.lineNumber;
      const n = cursor.tokenize();
      if (n < layout.columns || (layout.exact && n !== layout.columns)) {
        const need = layout.exact ? `${layout.columns}` : `at least ${layout.columns}`;
        const hint = n === 1 && Number.isInteger(parseInteger(cursor.token(0)))
          ? ` (this looks like an atom count: line ${countLine} announces ${count} atoms but only ${i} follow)`
          : '';
        throw new InputError(`atom ${i + 1} of ${count}: expected ${need} columns (${layout.describe}), found ${n}${hint}`, { file, line });
      }
      const speciesToken = cursor.token(layout.species);
      const symbol = resolver.resolve(speciesToken);
      if (symbol === null) {
        throw new InputError(`unknown species ${quote(speciesToken)} (expected an element symbol or an atomic number 1-96)`, { file, line });
      }
      species[i] = symbol;
      for (let axis = 0; axis < 3; axis++) {
        const token = cursor.token(layout.position + axis);
        const value = parseReal(token);
        if (Number.isNaN(value)) {
          throw new InputError(`${'xyz'[axis]} coordinate ${quote(token)} is not a finite number`, { file, line });
        }
        positions[3 * i + axis] = value;
      }
      if (occupancy) {
        const token = cursor.token(layout.occupancy);
        const value = parseReal(token);
        if (!(value >= 0 && value <= 1)) {
          throw new InputError(`occupancy ${quote(token)} is not a number between 0 and 1`, { file, line });
        }
        occupancy[i] = value;
      }
      if (labels) labels[i] = cursor.token(layout.label);
    }
    const info: StructureInfo = { file, format, frame: frames.length };
    if (header.title !== undefined) info.title = header.title;
    if (header.extra !== undefined) info.extra = header.extra;
    try {
      frames.push(makeStructure({ species, positions, occupancy, labels, lattice: header.lattice, info }));
    } catch (error) {
      locate(error, file, commentLine);
    }
  }
  if (frames.length === 0) {
    throw new InputError('no frames: the file is empty or blank', { file, line: Math.max(1, cursor.lineNumber) });
  }
  return frames;
}

/** Read all frames of a plain XYZ file (comment line kept as the title). */
export function readXyz(text: string, file: string): Structure[] {
  return readXyzFrames(text, file, 'xyz', (comment) => ({
    layout: PLAIN_XYZ_LAYOUT,
    lattice: null,
    title: comment.trim(),
  }));
}

/**
 * Write one frame as plain XYZ (numbers in shortest round-trip form).
 *
 * @throws InputError when the frame has a lattice or partial occupancies, which plain XYZ cannot
 * hold (write extended XYZ or CIF instead); site labels are not kept.
 */
export function writeXyz(structure: Structure): string {
  if (structure.lattice) {
    throw new InputError('plain XYZ cannot hold a lattice; write extended XYZ (extxyz) or CIF instead', { file: structure.info.file });
  }
  const n = structure.species.length;
  for (let i = 0; i < n; i++) {
    if (structure.occupancy[i] !== 1) {
      throw new InputError(`plain XYZ cannot hold occupancies (atom ${i + 1} has ${structure.occupancy[i]}); write extended XYZ or CIF instead`, { file: structure.info.file });
    }
  }
  const parts: string[] = [String(n), (structure.info.title ?? '').replace(/[\r\n]+/g, ' ')];
  const p = structure.positions;
  for (let i = 0; i < n; i++) {
    parts.push(`${structure.species[i]} ${p[3 * i]} ${p[3 * i + 1]} ${p[3 * i + 2]}`);
  }
  return parts.join('\n') + '\n';
}

/** Cheap content test: an integer count line, then (unless the count is 0) an atom line. */
export function sniffXyz(text: string): boolean {
  const cursor = new LineCursor(text.length > 4096 ? text.slice(0, 4096) : text);
  while (cursor.next() && cursor.isBlank()) { /* skip leading blank lines */ }
  if (cursor.lineNumber === 0 || cursor.tokenize() !== 1) return false;
  const count = parseInteger(cursor.token(0));
  if (!(count >= 0)) return false;
  if (!cursor.next()) return false;
  if (count === 0) return true;
  if (!cursor.next() || cursor.tokenize() < 4) return false;
  const resolver = new SpeciesResolver();
  return resolver.resolve(cursor.token(0)) !== null
    && !Number.isNaN(parseReal(cursor.token(1)))
    && !Number.isNaN(parseReal(cursor.token(2)))
    && !Number.isNaN(parseReal(cursor.token(3)));
}

/** Registry entry for plain XYZ. */
export const XYZ_FORMAT: StructureFormat = Object.freeze({
  name: 'xyz',
  description: 'XYZ (atom count, comment, "Sym x y z" lines in Å; multi-frame)',
  extensions: Object.freeze(['.xyz']),
  sniff: sniffXyz,
  read: readXyz,
  write: writeXyz,
});
