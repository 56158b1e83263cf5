/**
 * Reader for plain column files: whitespace-separated or comma-separated (CSV) numbers with a
 * header line naming the columns.
 *
 * Layout accepted (common practice, no source):
 * - optional comment lines starting with '#', '%', ';' or '!' (kept as comments);
 * - a header line of column names: either the first non-comment line when it is not numeric,
 *   or else the last comment line before the data when its word count matches the table;
 * - the data table, one row per line, all rows of equal width.
 * The delimiter is a comma when the first data row contains one, otherwise whitespace.
 * Units may be written after a name in parentheses or brackets ("energy (keV)", "E[eV]").
 */
import { InputError } from '../../core/errors';
import { sha256 } from '../../core/hash';
import type { ReadWarning, SpectrumDocument } from './document';
import { parseNumericTable, splitComma, splitLines, splitWhitespace, type SourceLine } from './table';

export interface ColumnsDocument extends SpectrumDocument {
  format: 'columns';
  delimiter: 'comma' | 'whitespace';
}

const COMMENT = /^[#%;!]/;
const LOOKS_NUMERIC = /^[+\-.\d]/;

/** Split "energy (keV)" / "E[eV]" / "mu" into a name and an optional unit. */
export function splitLabelUnit(label: string): { name: string; unit: string | null } {
  const m = /^(.*?)\s*[([]\s*([^)\]]*?)\s*[)\]]\s*$/.exec(label.trim());
  if (m && m[1] !== '') return { name: m[1].trim(), unit: m[2] === '' ? null : m[2] };
  return { name: label.trim(), unit: null };
}

/**
 * Parse a plain or CSV column file.
 * @throws InputError naming the file and line for an empty file, a ragged table or a bad number.
 */
export function parseColumns(text: string, file: string): ColumnsDocument {
  const lines = splitLines(text);
  const warnings: ReadWarning[] = [];
  const comments: string[] = [];
  let headerText: string | null = null;
  let headerLine = 0;
  let lastComment: { text: string; line: number } | null = null;
  const dataRows: SourceLine[] = [];
  for (let i = 0; i < lines.length; i++) {
    const t = lines[i].trim();
    if (t === '') continue;
    if (dataRows.length === 0) {
      if (COMMENT.test(t)) {
        const body = t.replace(/^[#%;!]+/, '').trim();
        comments.push(body);
        if (body !== '') lastComment = { text: body, line: i + 1 };
        continue;
      }
      if (!LOOKS_NUMERIC.test(t) && headerText === null) {
        headerText = t;
        headerLine = i + 1;
        continue;
      }
    } else if (COMMENT.test(t)) {
      warnings.push({ line: i + 1, message: 'comment line inside the data table ignored' });
      continue;
    }
    dataRows.push({ text: t, line: i + 1 });
  }
  if (dataRows.length === 0) throw new InputError('no data table found', { file, line: Math.max(lines.length, 1) });
  const comma = dataRows[0].text.includes(',');
  const split = comma ? splitComma : splitWhitespace;
  const table = parseNumericTable(dataRows, file, split);
  const width = table.columns.length;

  let names: string[] | null = null;
  if (headerText !== null) {
    const words = comma || headerText.includes(',') ? splitComma(headerText) : splitHeaderWords(headerText);
    if (words.length !== width) {
      throw new InputError(`the header names ${words.length} columns but the data rows have ${width}`, { file, line: headerLine });
    }
    names = words;
  } else if (lastComment !== null) {
    const words = comma && lastComment.text.includes(',') ? splitComma(lastComment.text) : splitHeaderWords(lastComment.text);
    if (words.length === width) {
      names = words;
      comments.pop();
    }
  }
  if (names === null) {
    warnings.push({ message: `no header line names the ${width} columns; named 'col1', 'col2', ...` });
    names = Array.from({ length: width }, (_, c) => `col${c + 1}`);
  }
  const labels: string[] = [];
  const units: (string | null)[] = [];
  names.forEach((n, c) => {
    const { name, unit } = splitLabelUnit(n);
    labels.push(name === '' ? `col${c + 1}` : name.replace(/\s+/g, '_'));
    units.push(unit);
  });
  return {
    format: 'columns',
    file,
    sha256: sha256(text),
    labels,
    units,
    table,
    fields: {},
    comments: comments.filter((c) => c !== '').join('\n'),
    warnings,
    delimiter: comma ? 'comma' : 'whitespace',
  };
}

/** Whitespace words of a header, keeping "name (unit)" together. */
function splitHeaderWords(text: string): string[] {
  const joined = text.replace(/\s+([([][^)\]]*[)\]])/g, '$1');
  return joined.trim().split(/\s+/);
}
