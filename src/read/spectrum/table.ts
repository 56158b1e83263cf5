/**
 * The numeric data table shared by the spectrum readers (XDI and plain/CSV columns): strict number
 * parsing and a rectangular table whose every row remembers its source line, so that any later
 * problem (a non-increasing energy, a zero intensity under a logarithm) can name the data line.
 *
 * Numbers follow the usual decimal syntax with an optional exponent (`e`, `E`, and the Fortran
 * `d`/`D` still written by some beamline software; common practice, no source). NaN, infinities,
 * thousands separators and anything else are refused.
 */
import { InputError } from '../../core/errors';

/** One data line as read: its text (trimmed) and its 1-based line number in the file. */
export interface SourceLine {
  text: string;
  line: number;
}

/** A rectangular numeric table, stored column by column. */
export interface NumericTable {
  /** One Float64Array per column, all of length `rows`. */
  columns: Float64Array[];
  /** 1-based source line of each row. */
  lines: Int32Array;
  rows: number;
}

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eEdD][+-]?\d+)?$/;

/** Parse one number token strictly; null when it is not a finite decimal number. */
export function parseStrictNumber(token: string): number | null {
  if (!NUMBER.test(token)) return null;
  const value = Number(token.replace(/[dD]/, 'e'));
  return Number.isFinite(value) ? value : null;
}

/** Why a token is not a number, for error messages. */
function describeBadToken(token: string): string {
  if (/^[+-]?(nan|inf|infinity)$/i.test(token)) return `'${token}' is not allowed in the data table (NaN and infinities are refused)`;
  return `'${token}' is not a number`;
}

/**
 * Parse data lines into a table. `split` turns a line into tokens (whitespace or comma split).
 * Every row must have the same number of values as the first one.
 * @throws InputError naming the file, the data line and the column for the first bad value.
 */
export function parseNumericTable(rows: readonly SourceLine[], file: string, split: (text: string) => string[]): NumericTable {
  if (rows.length === 0) throw new InputError('the data table is empty', { file });
  const first = split(rows[0].text);
  const width = first.length;
  if (width === 0) throw new InputError('the data table has no columns', { file, line: rows[0].line });
  const columns: Float64Array[] = [];
  for (let c = 0; c < width; c++) columns.push(new Float64Array(rows.length));
  const lines = new Int32Array(rows.length);
  for (let r = 0; r < rows.length; r++) {
    const { text, line } = rows[r];
    const tokens = r === 0 ? first : split(text);
    if (tokens.length !== width) {
      throw new InputError(
        `data line has ${tokens.length} values, expected ${width} (as on line ${rows[0].line})`,
        { file, line },
      );
    }
    for (let c = 0; c < width; c++) {
      const value = parseStrictNumber(tokens[c]);
      if (value === null) throw new InputError(`column ${c + 1}: ${describeBadToken(tokens[c])}`, { file, line });
      columns[c][r] = value;
    }
    lines[r] = line;
  }
  return { columns, lines, rows: rows.length };
}

/** Split on runs of whitespace. */
export function splitWhitespace(text: string): string[] {
  const t = text.trim();
  return t === '' ? [] : t.split(/\s+/);
}

/** Split on commas (each field trimmed); a trailing comma gives no empty last field. */
export function splitComma(text: string): string[] {
  const parts = text.split(',').map((s) => s.trim());
  if (parts.length > 1 && parts[parts.length - 1] === '') parts.pop();
  return parts;
}

/** Split a file's text into lines, accepting \n, \r\n and \r endings. */
export function splitLines(text: string): string[] {
  return text.split(/\r\n|\n|\r/);
}
