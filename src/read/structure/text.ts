/**
 * Shared text machinery for the structure readers: a line cursor that walks a file once
 * (linear time, no array of line strings), a whitespace tokenizer that records token bounds in
 * reusable typed arrays, strict number parsing, and species resolution (element symbol or
 * atomic number). Common practice for line-oriented scientific formats; no published method.
 */
import { InputError } from '../../core/errors';
import { MAX_Z, canonicalSymbol, elementByZ } from '../../elements/index';

/**
 * Walks a text line by line. After {@link LineCursor.next} returns true, `start`/`end` bound
 * the current line (without its "\n" or "\r\n") and `lineNumber` is its 1-based number.
 */
export class LineCursor {
  readonly text: string;
  /** Offset of the first character of the current line. */
  start = 0;
  /** Offset just past the last character of the current line (before "\r\n" / "\n"). */
  end = 0;
  /** 1-based number of the current line (0 before the first call to next). */
  lineNumber = 0;
  private nextStart: number;
  /** Token bounds of the current line after {@link LineCursor.tokenize}. */
  tokenStart: Int32Array = new Int32Array(16);
  tokenEnd: Int32Array = new Int32Array(16);

  constructor(text: string) {
    this.text = text;
    // A byte-order mark is not content.
    this.nextStart = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  }

  /** Advance to the next line; false at the end of the text. */
  next(): boolean {
    const text = this.text;
    // A final "\n" ends the last line; it does not start an empty one.
    if (this.nextStart >= text.length) return false;
    const start = this.nextStart;
    let newline = text.indexOf('\n', start);
    if (newline < 0) newline = text.length;
    let end = newline;
    if (end > start && text.charCodeAt(end - 1) === 13) end--;
    this.start = start;
    this.end = end;
    this.nextStart = newline + 1;
    this.lineNumber++;
    return true;
  }

  /** The current line as a string. */
  line(): string {
    return this.text.slice(this.start, this.end);
  }

  /** True when the current line holds only whitespace. */
  isBlank(): boolean {
    const text = this.text;
    for (let i = this.start; i < this.end; i++) {
      const c = text.charCodeAt(i);
      if (c !== 32 && c !== 9 && c !== 13 && c !== 11 && c !== 12) return false;
    }
    return true;
  }

  /** True when every remaining line (after the current one) is blank. */
  restIsBlank(): boolean {
    const text = this.text;
    for (let i = this.nextStart; i < text.length; i++) {
      const c = text.charCodeAt(i);
      if (c !== 32 && c !== 9 && c !== 13 && c !== 10 && c !== 11 && c !== 12) return false;
    }
    return true;
  }

  /**
   * Split the current line at whitespace into token bounds (tokenStart[i], tokenEnd[i]).
   * Returns the number of tokens.
   */
  tokenize(): number {
    const text = this.text;
    let count = 0;
    let i = this.start;
    const end = this.end;
    while (i < end) {
      let c = text.charCodeAt(i);
      while (i < end && (c === 32 || c === 9 || c === 11 || c === 12 || c === 13)) c = text.charCodeAt(++i);
      if (i >= end) break;
      const s = i;
      while (i < end && !(c === 32 || c === 9 || c === 11 || c === 12 || c === 13)) c = text.charCodeAt(++i);
      if (count === this.tokenStart.length) {
        const grownStart = new Int32Array(count * 2);
        const grownEnd = new Int32Array(count * 2);
        grownStart.set(this.tokenStart);
        grownEnd.set(this.tokenEnd);
        this.tokenStart = grownStart;
        this.tokenEnd = grownEnd;
      }
      this.tokenStart[count] = s;
      this.tokenEnd[count] = i;
      count++;
    }
    return count;
  }

  /** Token `index` of the current line (after tokenize) as a string. */
  token(index: number): string {
    return this.text.slice(this.tokenStart[index], this.tokenEnd[index]);
  }
}

/**
 * Strict decimal number: optional sign, digits with an optional point, optional exponent.
 * Returns NaN for anything else (hex, "Infinity", empty, trailing characters) and for values
 * that overflow to infinity.
 */
export function parseReal(token: string): number {
  const n = token.length;
  if (n === 0) return NaN;
  for (let i = 0; i < n; i++) {
    const c = token.charCodeAt(i);
    // digits, '+', '-', '.', 'e', 'E'
    if (!((c >= 48 && c <= 57) || c === 43 || c === 45 || c === 46 || c === 101 || c === 69)) return NaN;
  }
  const value = Number(token);
  return Number.isFinite(value) ? value : NaN;
}

/** Strict integer (optional sign, digits); NaN otherwise. */
export function parseInteger(token: string): number {
  const n = token.length;
  if (n === 0) return NaN;
  let i = token.charCodeAt(0) === 43 || token.charCodeAt(0) === 45 ? 1 : 0;
  if (i === n) return NaN;
  for (; i < n; i++) {
    const c = token.charCodeAt(i);
    if (c < 48 || c > 57) return NaN;
  }
  const value = Number(token);
  return Number.isSafeInteger(value) ? value : NaN;
}

/** Show a token in a message, shortened when long. */
export function quote(token: string): string {
  const shown = token.length > 40 ? `${token.slice(0, 37)}...` : token;
  return `'${shown}'`;
}

/**
 * Resolves species tokens (element symbols in any case, or atomic numbers 1..96) to canonical
 * symbols, caching by token so a million-atom file does one table look-up per distinct token.
 */
export class SpeciesResolver {
  private readonly cache = new Map<string, string | null>();

  /** Canonical symbol, or null when the token is neither a symbol nor an atomic number 1..96. */
  resolve(token: string): string | null {
    const cached = this.cache.get(token);
    if (cached !== undefined) return cached;
    let symbol: string | null = canonicalSymbol(token);
    if (symbol === null) {
      const z = parseInteger(token);
      if (Number.isInteger(z) && z >= 1 && z <= MAX_Z) symbol = elementByZ(z).symbol;
    }
    if (this.cache.size < 4096) this.cache.set(token, symbol);
    return symbol;
  }
}

/** Rethrow an InputError from a factory with the file and line filled in. */
export function locate(error: unknown, file: string, line: number): never {
  if (error instanceof InputError) throw error.withLocation({ file, line });
  throw error;
}

/**
 * Volume of a cell with unit edges and the given angles (degrees):
 * sqrt(1 - cos²α - cos²β - cos²γ + 2 cosα cosβ cosγ) (International Tables Vol. B, 1.1);
 * 0 (or NaN) when the angles cannot make a cell.
 */
export function unitCellVolume(alpha: number, beta: number, gamma: number): number {
  const rad = Math.PI / 180;
  const ca = Math.cos(alpha * rad), cb = Math.cos(beta * rad), cg = Math.cos(gamma * rad);
  const q = 1 - ca * ca - cb * cb - cg * cg + 2 * ca * cb * cg;
  return q > 0 ? Math.sqrt(q) : 0;
}

/** Smallest unit-cell volume (see {@link unitCellVolume}) accepted as a real cell. */
export const MIN_UNIT_CELL_VOLUME = 1e-4;
