/**
 * Extended XYZ structure files: XYZ frames whose comment line holds key=value pairs.
 *
 * Keys read (case-insensitive):
 * - `Lattice="ax ay az bx by bz cx cy cz"`: cell vectors as rows, Å.
 * - `Properties=name:type:count:...`: the atom-line columns, type S (string), R (real),
 *   I (integer) or L (logical). `species:S:1` (or, without species, `Z:I:1`) and `pos:R:3` are
 *   required; a real column named `occupancy` or `occ` gives occupancies, a string column named
 *   `label` gives site labels; all other columns are skipped by their declared widths.
 *   Without Properties the columns are `species:S:1:pos:R:3`.
 * - `pbc="T T T"`: periodicity. All false drops the lattice (a finite cluster in a box); a
 *   mixture keeps the lattice and records a warning, since a Structure is periodic in all three
 *   directions or none.
 * Values may be quoted with "..." (backslash escapes \" and \\) or braces {...}; a bare word is
 * a key with value "T". Every other key is kept as a string in `info.extra`.
 *
 * Reference: the extended XYZ convention as documented with the libAtoms/QUIP and ASE
 * projects (common practice; no formal standard).
 */
import { InputError } from '../../core/errors';
import type { StructureFormat } from '../registry';
import { cellVolume, type Structure } from '../../structure/structure';
import { LineCursor, parseInteger, parseReal, quote } from './text';
import { readXyzFrames, type XyzColumnLayout, type XyzFrameHeader } from './xyz';

/** One key=value pair of a comment line, in file order. */
export interface CommentPair {
  key: string;
  value: string;
}

/**
 * Split an extended-XYZ comment line into key=value pairs.
 *
 * @throws InputError (with the given file and line) on an unterminated quote or brace.
 */
export function parseCommentPairs(comment: string, file: string, line: number): CommentPair[] {
  const pairs: CommentPair[] = [];
  const n = comment.length;
  let i = 0;
  const isSpace = (c: number): boolean => c === 32 || c === 9 || c === 11 || c === 12 || c === 13;
  const readWord = (stopAtEquals: boolean): string => {
    const c = comment.charCodeAt(i);
    if (c === 34) {
      // "..." with backslash escapes
      let out = '';
      i++;
      while (i < n) {
        const d = comment.charCodeAt(i);
        if (d === 92 && i + 1 < n) { out += comment[i + 1]; i += 2; continue; }
        if (d === 34) { i++; return out; }
        out += comment[i];
        i++;
      }
      throw new InputError('unterminated "..." quote in the comment line', { file, line });
    }
    if (c === 123) {
      const close = comment.indexOf('}', i + 1);
      if (close < 0) throw new InputError('unterminated {...} value in the comment line', { file, line });
      const out = comment.slice(i + 1, close);
      i = close + 1;
      return out;
    }
    const start = i;
    while (i < n) {
      const d = comment.charCodeAt(i);
      if (isSpace(d) || (stopAtEquals && d === 61)) break;
      i++;
    }
    return comment.slice(start, i);
  };
  while (i < n) {
    while (i < n && isSpace(comment.charCodeAt(i))) i++;
    if (i >= n) break;
    const key = readWord(true);
    let j = i;
    while (j < n && isSpace(comment.charCodeAt(j))) j++;
    if (j < n && comment.charCodeAt(j) === 61) {
      i = j + 1;
      while (i < n && isSpace(comment.charCodeAt(i))) i++;
      const value = i < n ? readWord(false) : '';
      pairs.push({ key, value });
    } else {
      if (key.length === 0) {
        // a stray "=" with no key
        throw new InputError(`'=' without a key in the comment line`, { file, line });
      }
      pairs.push({ key, value: 'T' });
    }
  }
  return pairs;
}

/** Parse a logical flag as written in extended XYZ (T/F, True/False, 1/0). */
function parseFlag(token: string): boolean | null {
  const t = token.toLowerCase();
  if (t === 't' || t === 'true' || t === '1') return true;
  if (t === 'f' || t === 'false' || t === '0') return false;
  return null;
}

/** Column layout from a Properties value; InputError naming the key on anything malformed. */
export function parseProperties(value: string, file: string, line: number): XyzColumnLayout {
  const where = { file, line, key: 'Properties' };
  const fields = value.split(':');
  if (fields.length % 3 !== 0 || value.length === 0) {
    throw new InputError(`${quote(value)} is not a list of name:type:count triples`, where);
  }
  let column = 0;
  let species = -1;
  let atomicNumber = -1;
  let position = -1;
  let occupancy = -1;
  let label = -1;
  const described: string[] = [];
  for (let f = 0; f < fields.length; f += 3) {
    const name = fields[f];
    const type = fields[f + 1].toUpperCase();
    const count = parseInteger(fields[f + 2]);
    if (name.length === 0) throw new InputError(`property ${f / 3 + 1} has no name`, where);
    if (type !== 'S' && type !== 'R' && type !== 'I' && type !== 'L') {
      throw new InputError(`property '${name}' has type ${quote(fields[f + 1])}; expected S, R, I or L`, where);
    }
    if (!(count >= 1 && count <= 1000)) {
      throw new InputError(`property '${name}' has column count ${quote(fields[f + 2])}; expected a whole number 1-1000`, where);
    }
    const lower = name.toLowerCase();
    const need = (wantType: string, wantCount: number): void => {
      if (type !== wantType || count !== wantCount) {
        throw new InputError(`property '${name}' must be ${name}:${wantType}:${wantCount}, found ${name}:${type}:${count}`, where);
      }
    };
    if (lower === 'species') { need('S', 1); species = column; }
    else if (lower === 'z') { need('I', 1); atomicNumber = column; }
    else if (lower === 'pos') { need('R', 3); position = column; }
    else if (lower === 'occupancy' || lower === 'occ') { need('R', 1); occupancy = column; }
    else if (lower === 'label') { need('S', 1); label = column; }
    described.push(count === 1 ? name : `${name}(${count})`);
    column += count;
  }
  if (species < 0) species = atomicNumber;
  if (species < 0) throw new InputError('no species column (species:S:1, or Z:I:1)', where);
  if (position < 0) throw new InputError('no position columns (pos:R:3)', where);
  return { species, position, occupancy, label, columns: column, exact: true, describe: described.join(' ') };
}

const DEFAULT_LAYOUT: XyzColumnLayout = Object.freeze({
  species: 0, position: 1, occupancy: -1, label: -1, columns: 4, exact: true, describe: 'species x y z',
});

/** Interpret one extended-XYZ comment line. */
export function readExtxyzHeader(comment: string, file: string, line: number): XyzFrameHeader {
  const pairs = parseCommentPairs(comment, file, line);
  let layout = DEFAULT_LAYOUT;
  let lattice: Float64Array | null = null;
  let pbc: boolean[] | null = null;
  const extra: Record<string, string> = {};
  for (const { key, value } of pairs) {
    const lower = key.toLowerCase();
    if (lower === 'properties') {
      layout = parseProperties(value, file, line);
    } else if (lower === 'lattice') {
      const tokens = value.trim().split(/\s+/);
      if (tokens.length !== 9) {
        throw new InputError(`expected 9 numbers (three cell vectors), found ${tokens.length}`, { file, line, key: 'Lattice' });
      }
      lattice = new Float64Array(9);
      for (let k = 0; k < 9; k++) {
        const v = parseReal(tokens[k]);
        if (Number.isNaN(v)) throw new InputError(`${quote(tokens[k])} is not a finite number`, { file, line, key: 'Lattice' });
        lattice[k] = v;
      }
      const volume = cellVolume(lattice);
      if (!(Math.abs(volume) > 1e-6)) {
        throw new InputError(`the cell vectors are degenerate (volume ${volume} Å^3)`, { file, line, key: 'Lattice' });
      }
    } else if (lower === 'pbc') {
      const tokens = value.trim().split(/\s+/);
      const flags = tokens.map(parseFlag);
      if ((flags.length !== 3 && flags.length !== 1) || flags.some((f) => f === null)) {
        throw new InputError(`${quote(value)} is not three logical flags such as "T T T"`, { file, line, key: 'pbc' });
      }
      pbc = flags.length === 1 ? [flags[0]!, flags[0]!, flags[0]!] : (flags as boolean[]);
      extra[key] = value;
    } else {
      extra[key] = value;
    }
  }
  if (pbc && lattice) {
    const periodic = pbc.filter(Boolean).length;
    if (periodic === 0) {
      extra.lattice = Array.from(lattice).join(' ');
      lattice = null;
    } else if (periodic < 3) {
      extra.warning = `pbc="${pbc.map((p) => (p ? 'T' : 'F')).join(' ')}" is periodic in only some directions; `
        + 'the lattice is kept and treated as periodic in all three, so make sure the vacuum exceeds any cluster radius used';
    }
  } else if (pbc && !lattice && pbc.some(Boolean)) {
    throw new InputError('pbc says the frame is periodic but no Lattice= is given', { file, line, key: 'pbc' });
  }
  return { layout, lattice, title: comment.trim(), extra };
}

/** Read all frames of an extended XYZ file. */
export function readExtxyz(text: string, file: string): Structure[] {
  return readXyzFrames(text, file, 'extxyz', (comment, line) => readExtxyzHeader(comment, file, line));
}

function quoteValue(value: string): string {
  return `"${value.replace(/\\/g, '\\\\').replace(/"/g, '\\"')}"`;
}

function isDefaultLabels(structure: Structure): boolean {
  for (let i = 0; i < structure.species.length; i++) {
    if (structure.labels[i] !== `${structure.species[i]}${i + 1}`) return false;
  }
  return true;
}

/**
 * Write one frame as extended XYZ: Lattice and pbc="T T T" when periodic, an occupancy column
 * when any occupancy differs from 1, a label column when the labels are not the default
 * species+index (whitespace inside a label becomes "_"), and the string keys of info.extra whose
 * names are plain words.
 */
export function writeExtxyz(structure: Structure): string {
  const n = structure.species.length;
  let withOccupancy = false;
  for (let i = 0; i < n; i++) if (structure.occupancy[i] !== 1) withOccupancy = true;
  const withLabels = !isDefaultLabels(structure);
  const header: string[] = [];
  if (structure.lattice) header.push(`Lattice=${quoteValue(Array.from(structure.lattice).join(' '))}`);
  header.push(`Properties=species:S:1:pos:R:3${withOccupancy ? ':occupancy:R:1' : ''}${withLabels ? ':label:S:1' : ''}`);
  if (structure.lattice) header.push('pbc="T T T"');
  const reserved = new Set(['lattice', 'properties', 'pbc', 'warning']);
  for (const [key, value] of Object.entries(structure.info.extra ?? {})) {
    if (!/^[A-Za-z_][A-Za-z0-9_.-]*$/.test(key) || reserved.has(key.toLowerCase())) continue;
    header.push(`${key}=${quoteValue(value.replace(/[\r\n]+/g, ' '))}`);
  }
  const lines: string[] = [String(n), header.join(' ')];
  const p = structure.positions;
  for (let i = 0; i < n; i++) {
    let row = `${structure.species[i]} ${p[3 * i]} ${p[3 * i + 1]} ${p[3 * i + 2]}`;
    if (withOccupancy) row += ` ${structure.occupancy[i]}`;
    if (withLabels) row += ` ${structure.labels[i].replace(/\s+/g, '_') || '_'}`;
    lines.push(row);
  }
  return lines.join('\n') + '\n';
}

/** Content test: an integer first line and Lattice= or Properties= on the second line. */
export function sniffExtxyz(text: string): boolean {
  const cursor = new LineCursor(text.length > 8192 ? text.slice(0, 8192) : text);
  if (!cursor.next() || cursor.tokenize() !== 1 || !(parseInteger(cursor.token(0)) >= 0)) return false;
  if (!cursor.next()) return false;
  const comment = cursor.line().toLowerCase();
  return comment.includes('lattice=') || comment.includes('properties=');
}

/** Registry entry for extended XYZ. */
export const EXTXYZ_FORMAT: StructureFormat = Object.freeze({
  name: 'extxyz',
  description: 'extended XYZ (XYZ frames with Lattice=, Properties= and pbc= on the comment line)',
  extensions: Object.freeze(['.extxyz', '.exyz']),
  sniff: sniffExtxyz,
  read: readExtxyz,
  write: writeExtxyz,
});
