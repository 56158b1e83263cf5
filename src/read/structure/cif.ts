/**
 * CIF 1.1 crystal structures (Crystallographic Information File, IUCr).
 *
 * Syntax after the CIF 1.1 specification (Hall, Allen and Brown, Acta Cryst. A47, 655 (1991);
 * IUCr, "CIF version 1.1 syntax specification", 2003): `data_` blocks, `loop_` tables, tags,
 * unquoted, '...' and "..." strings (a quote closes only when followed by whitespace),
 * `;` text fields at the start of a line, `#` comments, `save_` frames (skipped), `?` (unknown)
 * and `.` (inapplicable). DDL2-style tags such as `_cell.length_a` are read as `_cell_length_a`.
 *
 * Crystal data read from the first data block that has atom sites (the names of other blocks go
 * to info.extra.otherBlocks): `_cell_length_a/b/c`, `_cell_angle_alpha/beta/gamma` (90 when
 * absent, noted in info.extra.note), `_atom_site_label`, `_atom_site_type_symbol` (else the
 * label's leading letters), `_atom_site_fract_x/y/z`, `_atom_site_occupancy`; numbers may carry
 * a standard uncertainty in parentheses, e.g. 3.6149(2), which is dropped.
 *
 * Symmetry: the operators of `_space_group_symop_operation_xyz` or `_symmetry_equiv_pos_as_xyz`
 * (strings like `-x+1/2, y, -z+3/4` or `x-y,x,z+1/6`) are applied to every site, images are
 * wrapped into [0, 1) and images of one site closer than 1e-3 (fractional, periodic) are merged
 * (International Tables for Crystallography Vol. A, general and special positions). Each image
 * keeps its asymmetric-unit site label, so a site can be chosen as the absorber by label. A file
 * that names a space group other than P 1 but lists no operators is refused: shellrank does not
 * build operators from space-group symbols.
 */
import { InputError } from '../../core/errors';
import type { StructureFormat } from '../registry';
import { makeStructure, invertCell, latticeFromParameters, type Structure, type StructureInfo } from '../../structure/structure';
import { canonicalSymbol } from '../../elements/index';
import { MIN_UNIT_CELL_VOLUME, parseReal, quote, unitCellVolume } from './text';

// ---------------------------------------------------------------------------------------------
// Lexer and block parser

type CifTokenKind = 'data' | 'loop' | 'save' | 'global' | 'stop' | 'tag' | 'value';

interface CifToken {
  kind: CifTokenKind;
  /** Tag name, block name, or the value text (quotes removed). */
  text: string;
  /** 1-based line where the token starts. */
  line: number;
  /** True for quoted strings and text fields (so "?" and "." are literal). */
  quoted: boolean;
}

/** One value of a CIF data item, with where it came from. */
export interface CifValue {
  text: string;
  line: number;
  quoted: boolean;
}

/** A data block: single items and loops, with tags normalised (lower case, DDL2 '.' -> '_'). */
export interface CifBlock {
  name: string;
  line: number;
  /** Tag -> its values (one for a single item, a column for a looped item). */
  columns: Map<string, CifValue[]>;
  /** Tag -> line of the tag itself. */
  tagLines: Map<string, number>;
  /** Tag -> index of the loop it belongs to (-1 for single items). */
  loopOf: Map<string, number>;
}

function isWhite(c: number): boolean {
  return c === 32 || c === 9 || c === 10 || c === 13 || c === 11 || c === 12;
}

function tokenizeCif(text: string, file: string): CifToken[] {
  const tokens: CifToken[] = [];
  const n = text.length;
  let i = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  let line = 1;
  let lineStart = i;
  while (i < n) {
    const c = text.charCodeAt(i);
    if (c === 10) { i++; line++; lineStart = i; continue; }
    if (isWhite(c)) { i++; continue; }
    if (c === 35) { // '#': comment to end of line
      const nl = text.indexOf('\n', i);
      i = nl < 0 ? n : nl;
      continue;
    }
    if (c === 59 && i === lineStart) { // ';' text field
      const startLine = line;
      let j = i + 1;
      let close = -1;
      for (;;) {
        const nl = text.indexOf('\n', j);
        if (nl < 0) break;
        line++;
        if (text.charCodeAt(nl + 1) === 59) { close = nl; break; }
        j = nl + 1;
      }
      if (close < 0) throw new InputError('text field opened with ";" is never closed by a line starting with ";"', { file, line: startLine });
      let value = text.slice(i + 1, close);
      if (value.endsWith('\r')) value = value.slice(0, -1);
      // An opening ';' alone on its line starts the value on the next line.
      const firstBreak = value.indexOf('\n');
      if (firstBreak >= 0 && value.slice(0, firstBreak).trim().length === 0) value = value.slice(firstBreak + 1);
      else if (firstBreak < 0 && value.trim().length === 0) value = '';
      tokens.push({ kind: 'value', text: value, line: startLine, quoted: true });
      i = close + 2;
      lineStart = close + 1;
      continue;
    }
    if (c === 39 || c === 34) { // quoted string: closes at the same quote followed by whitespace
      let j = i + 1;
      for (;;) {
        if (j >= n || text.charCodeAt(j) === 10) {
          throw new InputError(`unterminated ${c === 39 ? "'...'" : '"..."'} string`, { file, line });
        }
        if (text.charCodeAt(j) === c && (j + 1 >= n || isWhite(text.charCodeAt(j + 1)))) break;
        j++;
      }
      tokens.push({ kind: 'value', text: text.slice(i + 1, j), line, quoted: true });
      i = j + 1;
      continue;
    }
    const start = i;
    while (i < n && !isWhite(text.charCodeAt(i))) i++;
    const word = text.slice(start, i);
    const lower = word.toLowerCase();
    let kind: CifTokenKind = 'value';
    let body = word;
    if (lower.startsWith('data_')) { kind = 'data'; body = word.slice(5); }
    else if (lower === 'loop_') kind = 'loop';
    else if (lower.startsWith('save_')) { kind = 'save'; body = word.slice(5); }
    else if (lower === 'global_') kind = 'global';
    else if (lower === 'stop_') kind = 'stop';
    else if (c === 95) { kind = 'tag'; body = normaliseTag(word); }
    tokens.push({ kind, text: body, line, quoted: false });
  }
  return tokens;
}

/** Lower case, and the first '.' of a DDL2 tag ("_cell.length_a") read as '_'. */
function normaliseTag(tag: string): string {
  return tag.toLowerCase().replace('.', '_');
}

/**
 * Parse CIF text into data blocks.
 *
 * @throws InputError (file and line) on syntax errors: unterminated strings or text fields,
 * content outside a data block, a tag without a value, a loop whose values do not fill its
 * rows, a tag given twice in a block.
 */
export function parseCifBlocks(text: string, file: string): CifBlock[] {
  const tokens = tokenizeCif(text, file);
  const blocks: CifBlock[] = [];
  let block: CifBlock | null = null;
  let loops = 0;
  let t = 0;
  const define = (tag: string, line: number, values: CifValue[], loop: number): void => {
    if (!block) throw new InputError(`tag ${tag} appears before the first data_ block`, { file, line });
    if (block.columns.has(tag)) throw new InputError(`tag ${tag} is given twice in data block '${block.name}'`, { file, line, key: tag });
    block.columns.set(tag, values);
    block.tagLines.set(tag, line);
    block.loopOf.set(tag, loop);
  };
  while (t < tokens.length) {
    const token = tokens[t];
    switch (token.kind) {
      case 'data':
        if (token.text.length === 0) throw new InputError('data_ block without a name', { file, line: token.line });
        block = { name: token.text, line: token.line, columns: new Map(), tagLines: new Map(), loopOf: new Map() };
        blocks.push(block);
        loops = 0;
        t++;
        break;
      case 'save': {
        // Skip a save frame up to its closing bare "save_".
        if (token.text.length === 0) throw new InputError('save_ without an open save frame', { file, line: token.line });
        t++;
        while (t < tokens.length && !(tokens[t].kind === 'save' && tokens[t].text.length === 0)) t++;
        if (t >= tokens.length) throw new InputError(`save frame '${token.text}' is never closed`, { file, line: token.line });
        t++;
        break;
      }
      case 'global':
      case 'stop':
        throw new InputError(`reserved word ${token.kind}_ is not allowed in a CIF 1.1 data file`, { file, line: token.line });
      case 'tag': {
        const value = tokens[t + 1];
        if (!value || value.kind !== 'value') {
          throw new InputError(`tag ${token.text} has no value`, { file, line: token.line, key: token.text });
        }
        define(token.text, token.line, [{ text: value.text, line: value.line, quoted: value.quoted }], -1);
        t += 2;
        break;
      }
      case 'loop': {
        const loopLine = token.line;
        t++;
        const tags: CifToken[] = [];
        while (t < tokens.length && tokens[t].kind === 'tag') tags.push(tokens[t++]);
        if (tags.length === 0) throw new InputError('loop_ without tags', { file, line: loopLine });
        const columns: CifValue[][] = tags.map(() => []);
        let count = 0;
        let lastLine = tags[tags.length - 1].line;
        while (t < tokens.length && tokens[t].kind === 'value') {
          const v = tokens[t++];
          columns[count % tags.length].push({ text: v.text, line: v.line, quoted: v.quoted });
          lastLine = v.line;
          count++;
        }
        if (count % tags.length !== 0) {
          throw new InputError(`loop of ${tags.length} tags (${tags[0].text}, ...) holds ${count} values, not a whole number of rows`, { file, line: lastLine, key: tags[0].text });
        }
        const index = loops++;
        tags.forEach((tag, k) => define(tag.text, tag.line, columns[k], index));
        break;
      }
      case 'value':
        throw new InputError(`value ${quote(token.text)} without a tag`, { file, line: token.line });
    }
  }
  return blocks;
}

// ---------------------------------------------------------------------------------------------
// Values

/** True for the CIF null values: unquoted '?' (unknown) or '.' (inapplicable). */
function isNull(value: CifValue): boolean {
  return !value.quoted && (value.text === '?' || value.text === '.');
}

/**
 * A CIF number with its standard uncertainty dropped ("3.6149(2)" -> 3.6149). Fractions such as
 * "1/2" are accepted for coordinates. NaN when not a number.
 */
export function parseCifNumber(text: string): number {
  let body = text;
  const open = body.indexOf('(');
  if (open > 0 && body.endsWith(')')) {
    const su = body.slice(open + 1, -1);
    if (su.length === 0 || !/^\d+$/.test(su)) return NaN;
    body = body.slice(0, open);
  }
  const slash = body.indexOf('/');
  if (slash > 0) {
    const numerator = parseReal(body.slice(0, slash));
    const denominator = parseReal(body.slice(slash + 1));
    return denominator !== 0 ? numerator / denominator : NaN;
  }
  return parseReal(body);
}

function numberOf(value: CifValue, tag: string, file: string): number {
  const v = parseCifNumber(value.text);
  if (Number.isNaN(v)) throw new InputError(`${quote(value.text)} is not a number`, { file, line: value.line, key: tag });
  return v;
}

// ---------------------------------------------------------------------------------------------
// Symmetry operators

/** A symmetry operation on fractional coordinates: x' = R x + t, R row-major 3x3. */
export interface SymmetryOperation {
  rotation: Float64Array;
  translation: Float64Array;
}

/**
 * Parse an operator string such as "-x+1/2, y, -z+3/4" or "x-y,x,z+1/6".
 * Each of the three comma-separated parts is a sum of terms: a signed variable (x, y, z, any
 * case) with an optional numeric factor, or a signed constant (integer, decimal or fraction).
 *
 * @returns the operation, or a message saying what is wrong.
 */
export function parseSymmetryOperation(text: string): SymmetryOperation | string {
  const parts = text.replace(/\s+/g, '').toLowerCase().split(',');
  if (parts.length !== 3) return `expected three comma-separated parts, found ${parts.length}`;
  const rotation = new Float64Array(9);
  const translation = new Float64Array(3);
  for (let row = 0; row < 3; row++) {
    const part = parts[row];
    if (part.length === 0) return `part ${row + 1} is empty`;
    let i = 0;
    while (i < part.length) {
      let sign = 1;
      if (part[i] === '+' || part[i] === '-') { sign = part[i] === '-' ? -1 : 1; i++; }
      const numberStart = i;
      while (i < part.length && /[0-9.]/.test(part[i])) i++;
      let factor: number | null = null;
      if (i > numberStart) {
        factor = parseReal(part.slice(numberStart, i));
        if (part[i] === '/') {
          const denominatorStart = ++i;
          while (i < part.length && /[0-9.]/.test(part[i])) i++;
          const denominator = parseReal(part.slice(denominatorStart, i));
          factor = denominator ? factor / denominator : NaN;
        }
        if (Number.isNaN(factor)) return `bad number in ${quote(part)}`;
        if (part[i] === '*') i++;
      }
      const variable = 'xyz'.indexOf(part[i] ?? '#');
      if (variable >= 0 && i < part.length) {
        rotation[3 * row + variable] += sign * (factor ?? 1);
        i++;
      } else if (factor !== null) {
        translation[row] += sign * factor;
      } else {
        return `cannot read ${quote(part)} (expected terms like -x, +y, x-y, +1/2)`;
      }
    }
  }
  const [a, b, c, d, e, f, g, h, k] = rotation;
  const det = a * (e * k - f * h) - b * (d * k - f * g) + c * (d * h - e * g);
  if (Math.abs(Math.abs(det) - 1) > 1e-6) return `the rotation part has determinant ${det}, not +1 or -1`;
  return { rotation, translation };
}

/** Wrap a fractional coordinate into [0, 1). */
function wrapUnit(v: number): number {
  let w = v - Math.floor(v);
  if (w >= 1) w -= 1;
  return w + 0; // no -0
}

/** Fractional tolerance (periodic) within which two images of one site are the same atom. */
export const CIF_MERGE_TOLERANCE = 1e-3;

// ---------------------------------------------------------------------------------------------
// Crystal data

const SYMOP_TAGS = ['_space_group_symop_operation_xyz', '_symmetry_equiv_pos_as_xyz'];
const SPACE_GROUP_TAGS = [
  '_space_group_name_h-m_alt', '_symmetry_space_group_name_h-m',
  '_space_group_name_hall', '_symmetry_space_group_name_hall',
  '_space_group_it_number', '_symmetry_int_tables_number',
];

function elementFromText(text: string): string | null {
  let letters = 0;
  while (letters < text.length && /[A-Za-z]/.test(text[letters])) letters++;
  if (letters === 0) return null;
  if (letters >= 2) {
    const two = canonicalSymbol(text.slice(0, 2));
    if (two) return two;
  }
  return canonicalSymbol(text.slice(0, 1));
}

function structureFromBlock(block: CifBlock, file: string, others: string[]): Structure {
  const where = (tag: string, line?: number) => ({ file, line: line ?? block.tagLines.get(tag) ?? block.line, key: tag });
  const single = (tag: string): CifValue | null => {
    const values = block.columns.get(tag);
    if (!values) return null;
    if (values.length !== 1) throw new InputError(`expected one value, found a loop of ${values.length}`, where(tag));
    return values[0];
  };
  const extra: Record<string, string> = {};
  const notes: string[] = [];
  const warnings: string[] = [];
  if (others.length > 0) extra.otherBlocks = others.join(' ');

  // Cell
  const cell: number[] = [];
  for (const tag of ['_cell_length_a', '_cell_length_b', '_cell_length_c']) {
    const value = single(tag);
    if (!value || isNull(value)) throw new InputError(`the cell length ${tag} is missing`, where(tag));
    const length = numberOf(value, tag, file);
    if (!(length > 0)) throw new InputError(`cell length ${value.text} is not positive`, where(tag, value.line));
    cell.push(length);
  }
  let angleLine = block.line;
  let angleTag = '_cell_angle_alpha';
  for (const tag of ['_cell_angle_alpha', '_cell_angle_beta', '_cell_angle_gamma']) {
    const value = single(tag);
    if (!value || isNull(value)) {
      cell.push(90);
      notes.push(`${tag} absent, taken as 90`);
      continue;
    }
    const angle = numberOf(value, tag, file);
    if (!(angle > 0 && angle < 180)) throw new InputError(`cell angle ${value.text} is not between 0 and 180 degrees`, where(tag, value.line));
    cell.push(angle);
    angleLine = value.line;
    angleTag = tag;
  }
  if (!(unitCellVolume(cell[3], cell[4], cell[5]) > MIN_UNIT_CELL_VOLUME)) {
    throw new InputError(`cell angles ${cell[3]}, ${cell[4]}, ${cell[5]} degrees do not make a cell`, where(angleTag, angleLine));
  }
  let lattice: Float64Array;
  try {
    lattice = latticeFromParameters(cell[0], cell[1], cell[2], cell[3], cell[4], cell[5]);
  } catch (error) {
    if (error instanceof InputError) throw new InputError(error.reason, { file, line: angleLine, key: angleTag });
    throw error;
  }

  // Atom sites
  const fx = block.columns.get('_atom_site_fract_x')!;
  const fy = block.columns.get('_atom_site_fract_y');
  const fz = block.columns.get('_atom_site_fract_z');
  if (!fy || !fz) throw new InputError('_atom_site_fract_x is given without _atom_site_fract_y and _atom_site_fract_z', where('_atom_site_fract_x'));
  const siteCount = fx.length;
  const sameLoop = (tag: string): CifValue[] | null => {
    const values = block.columns.get(tag);
    if (!values) return null;
    if (values.length !== siteCount || block.loopOf.get(tag) !== block.loopOf.get('_atom_site_fract_x')) {
      throw new InputError(`${tag} is not in the same loop as _atom_site_fract_x (${values.length} values for ${siteCount} sites)`, where(tag));
    }
    return values;
  };
  sameLoop('_atom_site_fract_y');
  sameLoop('_atom_site_fract_z');
  const labelColumn = sameLoop('_atom_site_label');
  const typeColumn = sameLoop('_atom_site_type_symbol');
  const occupancyColumn = sameLoop('_atom_site_occupancy');
  const multiplicityColumn = sameLoop('_atom_site_symmetry_multiplicity');

  // Symmetry operators
  let operations: SymmetryOperation[] = [];
  for (const tag of SYMOP_TAGS) {
    const values = block.columns.get(tag);
    if (!values) continue;
    for (const value of values) {
      const op = parseSymmetryOperation(value.text);
      if (typeof op === 'string') throw new InputError(`symmetry operator ${quote(value.text)}: ${op}`, where(tag, value.line));
      operations.push(op);
    }
    extra.symmetryOperations = String(values.length);
    break;
  }
  let spaceGroup: { text: string; tag: string; line: number } | null = null;
  for (const tag of SPACE_GROUP_TAGS) {
    const value = block.columns.get(tag)?.[0];
    if (value && !isNull(value)) { spaceGroup = { text: value.text.trim(), tag, line: value.line }; break; }
  }
  if (spaceGroup) extra.spaceGroup = spaceGroup.text;
  if (operations.length === 0) {
    const compact = spaceGroup ? spaceGroup.text.replace(/\s+/g, '').toLowerCase() : null;
    if (compact !== null && compact !== 'p1' && compact !== '1' && compact !== 'p1(1)') {
      throw new InputError(
        `space group ${quote(spaceGroup!.text)} is named but no symmetry operators are listed `
        + `(${SYMOP_TAGS.join(' or ')}); shellrank does not build operators from space-group symbols: `
        + 'add the operator list or give the structure in P 1', where(spaceGroup!.tag, spaceGroup!.line));
    }
    if (compact === null) notes.push('no symmetry operators or space group given; read as P 1');
    operations = [{ rotation: Float64Array.from([1, 0, 0, 0, 1, 0, 0, 0, 1]), translation: new Float64Array(3) }];
  }

  // Expand every site.
  const species: string[] = [];
  const labels: string[] = [];
  const occupancy: number[] = [];
  const positions: number[] = [];
  const image = new Float64Array(3);
  for (let s = 0; s < siteCount; s++) {
    const label = labelColumn && !isNull(labelColumn[s]) ? labelColumn[s].text : null;
    let symbol: string | null = null;
    let symbolLine = fx[s].line;
    if (typeColumn && !isNull(typeColumn[s])) {
      symbol = elementFromText(typeColumn[s].text);
      symbolLine = typeColumn[s].line;
      if (!symbol) throw new InputError(`unknown species ${quote(typeColumn[s].text)}`, where('_atom_site_type_symbol', symbolLine));
    } else if (label) {
      symbol = elementFromText(label);
      symbolLine = labelColumn![s].line;
      if (!symbol) throw new InputError(`cannot tell the element from the site label ${quote(label)} (no _atom_site_type_symbol)`, where('_atom_site_label', symbolLine));
    } else {
      throw new InputError(`site ${s + 1} has neither _atom_site_type_symbol nor _atom_site_label`, where('_atom_site_fract_x', fx[s].line));
    }
    const siteLabel = label ?? `${symbol}${s + 1}`;
    const fract = [fx[s], fy[s], fz[s]].map((value, axis) => {
      const tag = `_atom_site_fract_${'xyz'[axis]}`;
      if (isNull(value)) throw new InputError(`site ${siteLabel} has an unknown coordinate '${value.text}'`, where(tag, value.line));
      return numberOf(value, tag, file);
    });
    let occ = 1;
    if (occupancyColumn && !isNull(occupancyColumn[s])) {
      occ = numberOf(occupancyColumn[s], '_atom_site_occupancy', file);
      if (!(occ >= 0 && occ <= 1 + 1e-6)) {
        throw new InputError(`site ${siteLabel} has occupancy ${occupancyColumn[s].text}, outside 0..1`, where('_atom_site_occupancy', occupancyColumn[s].line));
      }
      occ = Math.min(occ, 1);
    }
    const first = species.length;
    for (const op of operations) {
      const r = op.rotation;
      for (let axis = 0; axis < 3; axis++) {
        image[axis] = wrapUnit(r[3 * axis] * fract[0] + r[3 * axis + 1] * fract[1] + r[3 * axis + 2] * fract[2] + op.translation[axis]);
      }
      let duplicate = false;
      for (let k = first; k < species.length && !duplicate; k++) {
        let near = true;
        for (let axis = 0; axis < 3 && near; axis++) {
          let d = image[axis] - positions[3 * k + axis];
          d -= Math.round(d);
          if (Math.abs(d) >= CIF_MERGE_TOLERANCE) near = false;
        }
        duplicate = near;
      }
      if (duplicate) continue;
      species.push(symbol);
      labels.push(siteLabel);
      occupancy.push(occ);
      positions.push(image[0], image[1], image[2]);
    }
    if (multiplicityColumn && !isNull(multiplicityColumn[s])) {
      const expected = parseCifNumber(multiplicityColumn[s].text);
      const found = species.length - first;
      if (expected !== found) warnings.push(`site ${siteLabel}: ${found} atoms after symmetry expansion, but _atom_site_symmetry_multiplicity says ${multiplicityColumn[s].text}`);
    }
  }
  // Fractional -> Cartesian in place.
  for (let k = 0; k < species.length; k++) {
    const u = positions[3 * k], v = positions[3 * k + 1], w = positions[3 * k + 2];
    positions[3 * k] = u * lattice[0] + v * lattice[3] + w * lattice[6];
    positions[3 * k + 1] = u * lattice[1] + v * lattice[4] + w * lattice[7];
    positions[3 * k + 2] = u * lattice[2] + v * lattice[5] + w * lattice[8];
  }
  if (notes.length > 0) extra.note = notes.join('; ');
  if (warnings.length > 0) extra.warning = warnings.join('; ');
  const info: StructureInfo = { file, format: 'cif', frame: 0, title: block.name, extra };
  try {
    return makeStructure({ species, positions, occupancy, labels, lattice, info });
  } catch (error) {
    if (error instanceof InputError) throw error.withLocation({ file, line: block.line });
    throw error;
  }
}

/**
 * Read the first data block with atom sites of a CIF 1.1 file, symmetry expanded.
 *
 * @returns one Structure (periodic; Cartesian positions in Å in the conventional orientation,
 * a along x and b in the xy plane).
 * @throws InputError with file, line and tag on syntax errors, missing cell data, unreadable
 * numbers or operators, unknown species, or a space group without operators.
 */
export function readCif(text: string, file: string): Structure[] {
  const blocks = parseCifBlocks(text, file);
  if (blocks.length === 0) throw new InputError('no data_ block found', { file, line: 1 });
  const index = blocks.findIndex((b) => b.columns.has('_atom_site_fract_x'));
  if (index < 0) {
    const cartesian = blocks.some((b) => b.columns.has('_atom_site_cartn_x'));
    throw new InputError(cartesian
      ? 'the atom sites have only Cartesian coordinates (_atom_site_Cartn_x); shellrank reads fractional ones (_atom_site_fract_x)'
      : 'no data block has atom sites (_atom_site_fract_x)', { file, line: blocks[0].line });
  }
  const others = blocks.filter((_, k) => k !== index).map((b) => b.name);
  return [structureFromBlock(blocks[index], file, others)];
}

// ---------------------------------------------------------------------------------------------
// Writer

/** A string as a CIF value: bare when safe, else quoted. */
function cifString(text: string): string {
  if (text.length === 0) return "''";
  const bare = !/\s/.test(text) && !/^[_#$'";[\]]/.test(text) && text !== '?' && text !== '.'
    && !/^(data_|loop_|save_|global_|stop_)/i.test(text);
  if (bare) return text;
  if (!/\n/.test(text)) {
    if (!/'\s/.test(text) && !text.endsWith("'")) return `'${text}'`;
    if (!/"\s/.test(text) && !text.endsWith('"')) return `"${text}"`;
  }
  return `\n;${text}\n;\n`;
}

/**
 * Write one periodic frame as a P 1 CIF (all atoms listed, identity operator only).
 * The cell is written as lengths and angles, so a lattice that is not in the conventional
 * orientation (a along x, b in the xy plane) comes back rotated; fractional coordinates are
 * unchanged. Site labels are written as they are and may repeat (symmetry-expanded sites).
 *
 * @throws InputError for a frame without a lattice (a CIF needs a cell).
 */
export function writeCif(structure: Structure): string {
  const lattice = structure.lattice;
  if (!lattice) throw new InputError('a CIF needs a cell; this structure has no lattice (write XYZ instead)', { file: structure.info.file });
  const length = (k: number): number => Math.hypot(lattice[3 * k], lattice[3 * k + 1], lattice[3 * k + 2]);
  const angle = (p: number, q: number): number => {
    const dot = lattice[3 * p] * lattice[3 * q] + lattice[3 * p + 1] * lattice[3 * q + 1] + lattice[3 * p + 2] * lattice[3 * q + 2];
    return (Math.acos(Math.max(-1, Math.min(1, dot / (length(p) * length(q))))) * 180) / Math.PI;
  };
  const inverse = invertCell(lattice);
  const name = (structure.info.title ?? 'structure').replace(/[^A-Za-z0-9_.-]+/g, '_') || 'structure';
  const lines: string[] = [
    `data_${name}`,
    "_symmetry_space_group_name_H-M 'P 1'",
    `_cell_length_a ${length(0)}`,
    `_cell_length_b ${length(1)}`,
    `_cell_length_c ${length(2)}`,
    `_cell_angle_alpha ${angle(1, 2)}`,
    `_cell_angle_beta ${angle(0, 2)}`,
    `_cell_angle_gamma ${angle(0, 1)}`,
    'loop_',
    '_space_group_symop_operation_xyz',
    "'x, y, z'",
    'loop_',
    '_atom_site_label',
    '_atom_site_type_symbol',
    '_atom_site_fract_x',
    '_atom_site_fract_y',
    '_atom_site_fract_z',
    '_atom_site_occupancy',
  ];
  const p = structure.positions;
  for (let i = 0; i < structure.species.length; i++) {
    const x = p[3 * i], y = p[3 * i + 1], z = p[3 * i + 2];
    const u = x * inverse[0] + y * inverse[3] + z * inverse[6];
    const v = x * inverse[1] + y * inverse[4] + z * inverse[7];
    const w = x * inverse[2] + y * inverse[5] + z * inverse[8];
    lines.push(`${cifString(structure.labels[i])} ${structure.species[i]} ${u} ${v} ${w} ${structure.occupancy[i]}`);
  }
  return lines.join('\n') + '\n';
}

/** Content test: a line starting with data_ (after comments and blank lines) near the top. */
export function sniffCif(text: string): boolean {
  const head = text.length > 65536 ? text.slice(0, 65536) : text;
  return /^[ \t]*data_\S/im.test(head);
}

/** Registry entry for CIF 1.1. */
export const CIF_FORMAT: StructureFormat = Object.freeze({
  name: 'cif',
  description: 'CIF 1.1 crystal structure (cell, fractional sites, symmetry operators expanded)',
  extensions: Object.freeze(['.cif']),
  sniff: sniffCif,
  read: readCif,
  write: writeCif,
});
