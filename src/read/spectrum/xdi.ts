/**
 * Reader and writer for XDI, the open XAS Data Interchange format (version 1.0 of the
 * specification published with the format's public-domain example data):
 *
 *     # XDI/1.0 [Application/version ...]     version line (required, first line)
 *     # Family.key: value                      metadata fields
 *     # ///                                    end of fields, start of free user comments
 *     # free text ...
 *     # ----                                   end of header
 *     # label label ...                        optional column-label line
 *     1.0 2.0 ...                              whitespace-separated data table
 *
 * Field names are `Family.key`: one '.', a family starting with a letter, a key of letters,
 * digits and '_' (which may start with a digit). Column.N fields name the columns ("energy eV").
 *
 * Error policy (after the specification's collection of malformed files and its notes on each):
 * a missing version line, a malformed field line, a field without value and a bad data table
 * are errors; missing or invalid required fields (Element.symbol, Element.edge, Mono.d_spacing
 * for an angle column), missing recommended fields, bad Column.N bookkeeping, lines with an
 * unknown comment character, a missing header-end line and invalid values of well-known fields
 * (dates, temperatures, ring energy and current) are warnings.
 */
import { InputError } from '../../core/errors';
import { sha256 } from '../../core/hash';
import { isElementSymbol } from '../../elements/index';
import { fieldValue, type ReadWarning, type SpectrumDocument } from './document';
import { parseNumericTable, parseStrictNumber, splitLines, splitWhitespace, type SourceLine } from './table';

/** An XDI file as read: the common document plus the XDI version information. */
export interface XdiDocument extends SpectrumDocument {
  format: 'xdi';
  /** XDI version from the first line, e.g. "1.0". */
  version: string;
  /** The application versions after it ("GSE/1.0"), possibly none. */
  extraVersions: string[];
  /** Words of the column-label line after the header end, or null when absent. */
  labelLine: string[] | null;
}

const VERSION_LINE = /^#\s*XDI\/(\S+)\s*(.*)$/i;
const FIELD_NAME = /^[A-Za-z][A-Za-z0-9_]*\.[A-Za-z0-9_]+$/;
const FIELD_END = /^\/{2,}\s*$/;
const HEADER_END = /^-{2,}\s*$/;
/** A line that may begin a data row: a digit, sign or decimal point. */
const LOOKS_NUMERIC = /^[+\-.\d]/;

/** Edges the XDI specification lists (K, L, M, N, O shells and their sublevels). */
const XDI_EDGES = /^(K|L|L[1-3]|M|M[1-5]|N|N[1-7]|O|O[1-7])$/i;

/** Fields the XDI specification recommends; a missing one is a warning. */
export const XDI_RECOMMENDED_FIELDS: readonly string[] = [
  'Facility.name',
  'Facility.xray_source',
  'Beamline.name',
  'Mono.name',
  'Mono.d_spacing',
  'Sample.name',
  'Scan.start_time',
];

function fieldNameProblem(name: string): string | null {
  if (FIELD_NAME.test(name)) return null;
  if (/\s/.test(name)) return `field name '${name}' contains a space (expected 'Family.key: value')`;
  const dots = (name.match(/\./g) ?? []).length;
  if (dots === 0) return `field name '${name}' has no '.' between family and key (expected 'Family.key: value')`;
  if (dots > 1) return `field name '${name}' has more than one '.' (expected 'Family.key: value')`;
  if (/^[0-9]/.test(name)) return `field name '${name}': the family must start with a letter`;
  return `field name '${name}' may hold only letters, digits and '_' around one '.'`;
}

/**
 * Parse XDI text. `file` is used in messages and provenance only.
 * @throws InputError naming the file and line for fatal problems (see the module comment).
 */
export function parseXdi(text: string, file: string): XdiDocument {
  const lines = splitLines(text);
  const warnings: ReadWarning[] = [];
  const first = (lines[0] ?? '').trim();
  const version = VERSION_LINE.exec(first);
  if (!version) {
    throw new InputError(`not an XDI file: the first line must be the version line '# XDI/1.0 ...', got '${first.slice(0, 40)}'`, { file, line: 1 });
  }
  const extraVersions = version[2].trim() === '' ? [] : version[2].trim().split(/\s+/);
  const fields: Record<string, string> = {};
  const fieldLines: Record<string, number> = {};
  const comments: string[] = [];
  let labelLine: string[] | null = null;
  let state: 'fields' | 'comments' | 'labels' | 'data' = 'fields';
  let sawHeaderEnd = false;
  const dataRows: SourceLine[] = [];

  for (let i = 1; i < lines.length; i++) {
    const lineNumber = i + 1;
    const t = lines[i].trim();
    if (t === '') continue;
    if (state === 'data') {
      if (t.startsWith('#')) {
        warnings.push({ line: lineNumber, message: 'comment line inside the data table ignored' });
        continue;
      }
      dataRows.push({ text: t, line: lineNumber });
      continue;
    }
    if (!t.startsWith('#')) {
      if (!sawHeaderEnd && !LOOKS_NUMERIC.test(t)) {
        warnings.push({ line: lineNumber, message: `header line starts with the unsupported comment character '${t[0]}'; line ignored` });
        continue;
      }
      if (!sawHeaderEnd) warnings.push({ line: lineNumber, message: "no header-end line ('# ----') before the data table" });
      state = 'data';
      dataRows.push({ text: t, line: lineNumber });
      continue;
    }
    const body = t.slice(1).trim();
    if (state === 'fields') {
      if (body === '') continue;
      if (FIELD_END.test(body)) {
        state = 'comments';
        continue;
      }
      if (HEADER_END.test(body)) {
        state = 'labels';
        sawHeaderEnd = true;
        continue;
      }
      const colon = body.indexOf(':');
      if (colon < 0) throw new InputError(`header line is not a field 'Family.key: value' (no ':')`, { file, line: lineNumber });
      const name = body.slice(0, colon).trim();
      const value = body.slice(colon + 1).trim();
      const problem = fieldNameProblem(name);
      if (problem) throw new InputError(problem, { file, line: lineNumber });
      if (value === '') throw new InputError(`field '${name}' has no value`, { file, line: lineNumber });
      const existing = Object.keys(fields).find((k) => k.toLowerCase() === name.toLowerCase());
      if (existing !== undefined) {
        warnings.push({ line: lineNumber, message: `field '${name}' repeated (first on line ${fieldLines[existing]}); the last value is kept` });
        delete fields[existing];
      }
      fields[name] = value;
      fieldLines[name] = lineNumber;
      continue;
    }
    if (state === 'comments') {
      if (HEADER_END.test(body)) {
        state = 'labels';
        sawHeaderEnd = true;
        continue;
      }
      if (FIELD_END.test(body)) continue;
      comments.push(body);
      continue;
    }
    // state 'labels': the first non-empty comment line after the header end names the columns
    if (body !== '' && labelLine === null) labelLine = body.split(/\s+/);
  }

  if (dataRows.length === 0) throw new InputError('no data table after the header', { file, line: lines.length });
  const table = parseNumericTable(dataRows, file, splitWhitespace);
  const { labels, units } = columnNames(fields, fieldLines, labelLine, table.columns.length, warnings);
  checkRequiredFields(fields, fieldLines, labels, warnings);
  checkFieldValues(fields, fieldLines, warnings);
  return {
    format: 'xdi',
    file,
    sha256: sha256(text),
    version: version[1],
    extraVersions,
    labels,
    units,
    table,
    fields,
    comments: comments.join('\n'),
    labelLine,
    warnings,
  };
}

function columnNames(
  fields: Record<string, string>,
  fieldLines: Record<string, number>,
  labelLine: string[] | null,
  width: number,
  warnings: ReadWarning[],
): { labels: string[]; units: (string | null)[] } {
  const named = new Map<number, { name: string; unit: string | null; line: number }>();
  for (const key of Object.keys(fields)) {
    const m = /^column\.(\d+)$/i.exec(key);
    if (!m) continue;
    const index = Number(m[1]);
    const words = fields[key].split(/\s+/);
    named.set(index, { name: words[0], unit: words.length > 1 ? words.slice(1).join(' ') : null, line: fieldLines[key] });
  }
  const indices = [...named.keys()].sort((a, b) => a - b);
  if (indices.length === 0) warnings.push({ message: 'no Column.N fields name the data columns' });
  else if (indices.some((v, i) => v !== i + 1)) {
    warnings.push({ message: `Column.N indices are not continuous from 1 (${indices.join(', ')})` });
  }
  for (const index of indices) {
    if (index < 1 || index > width) {
      warnings.push({ line: named.get(index)!.line, message: `Column.${index} names no data column (the table has ${width}); ignored` });
    }
  }
  const useLabelLine = labelLine !== null && labelLine.length === width;
  const labels: string[] = [];
  const units: (string | null)[] = [];
  const unnamed: number[] = [];
  for (let c = 1; c <= width; c++) {
    const entry = named.get(c);
    if (entry) {
      labels.push(entry.name);
      units.push(entry.unit);
    } else {
      unnamed.push(c);
      labels.push(useLabelLine ? labelLine[c - 1] : `col${c}`);
      units.push(null);
    }
  }
  if (unnamed.length > 0 && indices.length > 0) {
    warnings.push({
      message: `no Column.N field for column${unnamed.length > 1 ? 's' : ''} ${unnamed.join(', ')}; named ${useLabelLine ? 'from the label line' : "'colN'"}`,
    });
  } else if (unnamed.length > 0) {
    warnings.push({ message: `columns named ${useLabelLine ? 'from the label line' : "'col1', 'col2', ..."}` });
  }
  return { labels, units };
}

function checkRequiredFields(
  fields: Record<string, string>,
  fieldLines: Record<string, number>,
  labels: string[],
  warnings: ReadWarning[],
): void {
  const line = (key: string): number | undefined => {
    const k = Object.keys(fieldLines).find((x) => x.toLowerCase() === key.toLowerCase());
    return k === undefined ? undefined : fieldLines[k];
  };
  const symbol = fieldValue(fields, 'Element.symbol');
  if (symbol === undefined) warnings.push({ message: 'required field Element.symbol is missing' });
  else if (!isElementSymbol(symbol)) warnings.push({ line: line('Element.symbol'), message: `Element.symbol '${symbol}' is not an element symbol` });
  const edge = fieldValue(fields, 'Element.edge');
  if (edge === undefined) warnings.push({ message: 'required field Element.edge is missing' });
  else if (!XDI_EDGES.test(edge)) warnings.push({ line: line('Element.edge'), message: `Element.edge '${edge}' is not an absorption edge name` });
  const first = labels[0]?.toLowerCase();
  const dSpacing = fieldValue(fields, 'Mono.d_spacing');
  if (first === 'angle' && dSpacing === undefined) {
    warnings.push({ message: 'column 1 is an angle but the required field Mono.d_spacing is missing' });
  }
  if (dSpacing !== undefined) {
    const d = parseStrictNumber(dSpacing.split(/\s+/)[0]);
    if (d === null || !(d > 0)) warnings.push({ line: line('Mono.d_spacing'), message: `Mono.d_spacing '${dSpacing}' is not a positive number (Å)` });
  }
  if (first !== 'energy' && first !== 'angle') {
    warnings.push({ message: `column 1 is '${labels[0]}', but the XDI specification recommends 'energy' or 'angle'` });
  }
  for (const key of XDI_RECOMMENDED_FIELDS) {
    if (fieldValue(fields, key) === undefined) warnings.push({ message: `recommended field ${key} is missing` });
  }
}

const DATE_TIME = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?(Z|[+-]\d{2}:?\d{2})?$/;

/** True for an ISO 8601 date-time "YYYY-MM-DDThh:mm[:ss]" with valid ranges (a space may replace the T). */
export function isValidDateTime(text: string): boolean {
  const m = DATE_TIME.exec(text.trim());
  if (!m) return false;
  const [year, month, day, hour, minute, second] = [m[1], m[2], m[3], m[4], m[5], m[6] ?? '0'].map(Number);
  if (month < 1 || month > 12 || hour > 23 || minute > 59 || second > 60) return false;
  const daysInMonth = new Date(Date.UTC(year, month, 0)).getUTCDate();
  return day >= 1 && day <= daysInMonth;
}

/** A number followed by one of the allowed units (case-insensitive), e.g. "7.00 GeV". */
function isQuantity(text: string, units: readonly string[], unitOptional: boolean): boolean {
  const words = text.trim().split(/\s+/);
  if (parseStrictNumber(words[0]) === null) return false;
  if (words.length === 1) return unitOptional;
  if (words.length > 2) return false;
  return units.some((u) => u.toLowerCase() === words[1].toLowerCase());
}

function checkFieldValues(fields: Record<string, string>, fieldLines: Record<string, number>, warnings: ReadWarning[]): void {
  for (const key of Object.keys(fields)) {
    const value = fields[key];
    const lower = key.toLowerCase();
    const line = fieldLines[key];
    if ((lower === 'scan.start_time' || lower === 'scan.end_time') && !isValidDateTime(value)) {
      warnings.push({ line, message: `${key} '${value}' is not an ISO 8601 date-time (YYYY-MM-DDThh:mm:ss)` });
    } else if (lower === 'sample.temperature' && !isQuantity(value, ['K', 'C', 'F', 'degC', '°C'], true)) {
      warnings.push({ line, message: `${key} '${value}' is not a temperature (a number and K, C or F)` });
    } else if (lower === 'facility.energy' && !isQuantity(value, ['GeV', 'MeV'], false)) {
      warnings.push({ line, message: `${key} '${value}' is not a ring energy (a number and GeV or MeV)` });
    } else if (lower === 'facility.current' && !isQuantity(value, ['mA', 'A'], false)) {
      warnings.push({ line, message: `${key} '${value}' is not a ring current (a number and mA or A)` });
    }
  }
}

/** What {@link formatXdi} writes. */
export interface XdiContent {
  /** Fields in order; Column.N fields are generated from `labels`/`units` and must not be given. */
  fields: Record<string, string>;
  comments: string;
  labels: string[];
  units: (string | null)[];
  columns: Float64Array[];
  /** Application versions written after "XDI/1.0" on the version line; default none. */
  extraVersions?: string[];
}

/**
 * Write XDI 1.0 text. Numbers are written with enough digits to read back unchanged
 * (JavaScript's shortest round-trip form).
 * @throws RangeError when columns differ in length or labels contain spaces.
 */
export function formatXdi(content: XdiContent): string {
  const { labels, units, columns } = content;
  if (labels.length !== columns.length || units.length !== columns.length) {
    throw new RangeError(`formatXdi: ${labels.length} labels, ${units.length} units and ${columns.length} columns must agree`);
  }
  const rows = columns[0]?.length ?? 0;
  columns.forEach((c, i) => {
    if (c.length !== rows) throw new RangeError(`formatXdi: column ${i + 1} has ${c.length} values, column 1 has ${rows}`);
    for (let r = 0; r < rows; r++) if (!Number.isFinite(c[r])) throw new RangeError(`formatXdi: column ${i + 1}, row ${r + 1} is not a finite number`);
  });
  labels.forEach((l) => {
    if (/\s/.test(l) || l === '') throw new RangeError(`formatXdi: column label '${l}' must be one word`);
  });
  const out: string[] = [];
  out.push(`# XDI/1.0${content.extraVersions && content.extraVersions.length ? ' ' + content.extraVersions.join(' ') : ''}`);
  labels.forEach((l, i) => out.push(`# Column.${i + 1}: ${l}${units[i] ? ' ' + units[i] : ''}`));
  for (const [key, value] of Object.entries(content.fields)) {
    if (/^column\.\d+$/i.test(key)) continue;
    if (fieldNameProblem(key)) throw new RangeError(`formatXdi: ${fieldNameProblem(key)}`);
    const oneLine = value.replace(/[\r\n]+/g, ' ').trim();
    if (oneLine !== '') out.push(`# ${key}: ${oneLine}`);
  }
  out.push('# ///');
  for (const line of content.comments.split('\n')) if (line.trim() !== '') out.push(`# ${line.trim()}`);
  out.push('#----');
  out.push(`# ${labels.join(' ')}`);
  for (let r = 0; r < rows; r++) {
    let line = '';
    for (let c = 0; c < columns.length; c++) line += '  ' + String(columns[c][r]);
    out.push(line);
  }
  return out.join('\n') + '\n';
}

/** True when the text starts with an XDI version line. */
export function looksLikeXdi(text: string): boolean {
  return VERSION_LINE.test(text.slice(0, 200).split(/\r\n|\n|\r/)[0].trim());
}
