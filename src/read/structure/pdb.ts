/**
 * PDB coordinate files (fixed-column records).
 *
 * Column layout after the wwPDB "Atomic Coordinate Entry Format Description", version 3.3
 * (wwPDB, 2012), 1-based inclusive columns:
 * - ATOM / HETATM: atom name 13-16, alternate location 17, residue name 18-20, chain 22,
 *   residue number 23-26, x 31-38, y 39-46, z 47-54 (Å), occupancy 55-60, element 77-78.
 *   When the element columns are blank, the element is taken from the atom name (columns
 *   13-14 with digits and spaces removed; a two-letter element only when the name starts in
 *   column 13), and a warning in info.extra says so.
 * - CRYST1: a 7-15, b 16-24, c 25-33 (Å), alpha 34-40, beta 41-47, gamma 48-54 (degrees),
 *   space group 56-66. The cell becomes the lattice in the standard PDB orthogonalisation
 *   (a along x, b in the xy plane). The placeholder cell 1 1 1 90 90 90 that the format
 *   prescribes for non-crystallographic entries means "no lattice". The coordinates are the
 *   asymmetric unit: symmetry mates other than lattice translations are not generated, which a
 *   warning says when the space group is not P 1.
 * - MODEL / ENDMDL: one frame per model; END ends the file. Other records are ignored.
 * Labels are the trimmed atom names.
 */
import { InputError } from '../../core/errors';
import type { StructureFormat } from '../registry';
import { latticeFromParameters, makeStructure, type Structure, type StructureInfo } from '../../structure/structure';
import { LineCursor, MIN_UNIT_CELL_VOLUME, SpeciesResolver, locate, parseInteger, parseReal, quote, unitCellVolume } from './text';

interface PendingFrame {
  species: string[];
  labels: string[];
  positions: number[];
  occupancy: number[];
  /** Number of atoms whose element came from the atom name. */
  guessed: number;
  model: string | null;
  line: number;
}

function newFrame(model: string | null, line: number): PendingFrame {
  return { species: [], labels: [], positions: [], occupancy: [], guessed: 0, model, line };
}

/** Columns [from, to] (1-based, inclusive) of a line, trimmed; '' past the end. */
function columns(line: string, from: number, to: number): string {
  return line.slice(from - 1, to).trim();
}

/**
 * Read all models of a PDB file.
 *
 * @throws InputError (file, 1-based line, field) on unreadable coordinates, occupancies or
 * cell numbers, unknown elements, unbalanced MODEL/ENDMDL, or a file with no atoms.
 */
export function readPdb(text: string, file: string): Structure[] {
  const cursor = new LineCursor(text);
  const resolver = new SpeciesResolver();
  const frames: PendingFrame[] = [];
  let lattice: Float64Array | null = null;
  let cellLine = 0;
  let spaceGroup = '';
  let open: PendingFrame | null = null; // inside MODEL ... ENDMDL
  let loose: PendingFrame | null = null; // atoms outside any MODEL
  let title = '';
  while (cursor.next()) {
    const line = cursor.line();
    const lineNumber = cursor.lineNumber;
    const record = line.slice(0, 6).trimEnd().toUpperCase();
    if (record === 'ATOM' || record === 'HETATM') {
      const where = (key: string) => ({ file, line: lineNumber, key });
      const coordinates = [0, 0, 0];
      for (let axis = 0; axis < 3; axis++) {
        const from = 31 + 8 * axis;
        const field = columns(line, from, from + 7);
        const value = parseReal(field);
        if (Number.isNaN(value)) {
          throw new InputError(`${'xyz'[axis]} coordinate (columns ${from}-${from + 7}) ${quote(field)} is not a number`, where('xyz'[axis]));
        }
        coordinates[axis] = value;
      }
      const occupancyField = columns(line, 55, 60);
      let occupancy = 1;
      if (occupancyField.length > 0) {
        occupancy = parseReal(occupancyField);
        if (!(occupancy >= 0 && occupancy <= 1)) {
          throw new InputError(`occupancy (columns 55-60) ${quote(occupancyField)} is not a number between 0 and 1`, where('occupancy'));
        }
      }
      const rawName = line.slice(12, 16);
      const name = rawName.trim();
      const elementField = columns(line, 77, 78);
      let symbol: string | null;
      let guessed = false;
      if (elementField.length > 0) {
        symbol = resolver.resolve(elementField);
        if (symbol === null || /\d/.test(elementField)) {
          throw new InputError(`unknown element (columns 77-78) ${quote(elementField)}`, where('element'));
        }
      } else {
        // Element from the name: columns 13-14 without digits and spaces.
        const head = rawName.slice(0, 2).replace(/[\d\s]/g, '');
        symbol = head.length === 2 ? resolver.resolve(head) : null;
        if (symbol === null && head.length >= 1) symbol = resolver.resolve(head[0]);
        if (symbol === null && name.length > 0) symbol = resolver.resolve(name.replace(/[^A-Za-z]/g, '').slice(0, 1));
        if (symbol === null) {
          throw new InputError(`no element in columns 77-78 and none can be read from the atom name ${quote(name)}`, where('element'));
        }
        guessed = true;
      }
      let frame = open;
      if (!frame) {
        if (!loose) { loose = newFrame(null, lineNumber); frames.push(loose); }
        frame = loose;
      }
      frame.species.push(symbol);
      frame.labels.push(name.length > 0 ? name : `${symbol}${frame.species.length}`);
      frame.positions.push(coordinates[0], coordinates[1], coordinates[2]);
      frame.occupancy.push(occupancy);
      if (guessed) frame.guessed++;
    } else if (record === 'CRYST1') {
      const names = ['a', 'b', 'c', 'alpha', 'beta', 'gamma'];
      const spans: [number, number][] = [[7, 15], [16, 24], [25, 33], [34, 40], [41, 47], [48, 54]];
      const cell = spans.map(([from, to], k) => {
        const field = columns(line, from, to);
        const value = parseReal(field);
        if (Number.isNaN(value)) {
          throw new InputError(`CRYST1 ${names[k]} (columns ${from}-${to}) ${quote(field)} is not a number`, { file, line: lineNumber, key: names[k] });
        }
        return value;
      });
      for (let k = 0; k < 3; k++) {
        if (!(cell[k] > 0)) throw new InputError(`CRYST1 ${names[k]} = ${cell[k]} is not a positive length`, { file, line: lineNumber, key: names[k] });
        if (!(cell[k + 3] > 0 && cell[k + 3] < 180)) throw new InputError(`CRYST1 ${names[k + 3]} = ${cell[k + 3]} is not between 0 and 180 degrees`, { file, line: lineNumber, key: names[k + 3] });
      }
      if (!(unitCellVolume(cell[3], cell[4], cell[5]) > MIN_UNIT_CELL_VOLUME)) {
        throw new InputError(`CRYST1 angles ${cell[3]}, ${cell[4]}, ${cell[5]} degrees do not make a cell`, { file, line: lineNumber, key: 'alpha' });
      }
      spaceGroup = columns(line, 56, 66);
      cellLine = lineNumber;
      const placeholder = cell[0] === 1 && cell[1] === 1 && cell[2] === 1 && cell[3] === 90 && cell[4] === 90 && cell[5] === 90;
      if (placeholder) {
        lattice = null;
      } else {
        try {
          lattice = latticeFromParameters(cell[0], cell[1], cell[2], cell[3], cell[4], cell[5]);
        } catch (error) {
          locate(error, file, lineNumber);
        }
      }
    } else if (record === 'MODEL') {
      if (open) throw new InputError(`MODEL inside model ${open.model ?? ''} (opened on line ${open.line}) without ENDMDL`, { file, line: lineNumber });
      const serial = columns(line, 7, 80);
      if (serial.length > 0 && Number.isNaN(parseInteger(serial))) {
        throw new InputError(`MODEL serial number ${quote(serial)} is not a whole number`, { file, line: lineNumber });
      }
      open = newFrame(serial || String(frames.length + 1), lineNumber);
      frames.push(open);
    } else if (record === 'ENDMDL') {
      if (!open) throw new InputError('ENDMDL without a MODEL', { file, line: lineNumber });
      open = null;
    } else if (record === 'END') {
      break;
    } else if (record === 'TITLE' || record === 'HEADER') {
      if (record === 'HEADER' || title.length === 0) title = columns(line, 11, 80);
      else title += ` ${columns(line, 11, 80)}`;
    }
  }
  if (open) throw new InputError(`MODEL ${open.model} (line ${open.line}) is never closed by ENDMDL`, { file, line: cursor.lineNumber });
  const withAtoms = frames.filter((f) => f.species.length > 0);
  if (withAtoms.length === 0) {
    throw new InputError('no ATOM or HETATM records', { file, line: Math.max(1, cursor.lineNumber) });
  }
  const compactGroup = spaceGroup.replace(/\s+/g, '').toUpperCase();
  return withAtoms.map((frame, index) => {
    const extra: Record<string, string> = {};
    const warnings: string[] = [];
    if (frame.model !== null) extra.model = frame.model;
    if (spaceGroup) extra.spaceGroup = spaceGroup;
    if (lattice && compactGroup !== '' && compactGroup !== 'P1') {
      warnings.push(`space group ${spaceGroup}: the coordinates are the asymmetric unit; only lattice translations are applied, other symmetry mates are missing`);
    }
    if (frame.guessed > 0) {
      warnings.push(`${frame.guessed} atoms have blank element columns 77-78; their elements were read from the atom names`);
    }
    if (warnings.length > 0) extra.warning = warnings.join('; ');
    const info: StructureInfo = { file, format: 'pdb', frame: index, extra };
    if (title) info.title = title;
    try {
      return makeStructure({
        species: frame.species, positions: frame.positions, occupancy: frame.occupancy,
        labels: frame.labels, lattice, info,
      });
    } catch (error) {
      return locate(error, file, cellLine || frame.line);
    }
  });
}

/** Content test: a PDB record name at the start of one of the first lines. */
export function sniffPdb(text: string): boolean {
  const cursor = new LineCursor(text.length > 16384 ? text.slice(0, 16384) : text);
  let lines = 0;
  while (cursor.next() && lines++ < 200) {
    const record = cursor.text.slice(cursor.start, Math.min(cursor.end, cursor.start + 6));
    if (record === 'ATOM  ' || record === 'HETATM' || record === 'CRYST1' || record.startsWith('HEADER') || record === 'MODEL ') return true;
  }
  return false;
}

/** Registry entry for PDB. */
export const PDB_FORMAT: StructureFormat = Object.freeze({
  name: 'pdb',
  description: 'PDB coordinates (ATOM/HETATM with element columns, CRYST1 cell, MODEL frames)',
  extensions: Object.freeze(['.pdb', '.ent']),
  sniff: sniffPdb,
  read: readPdb,
});
