/**
 * Where command output goes: to a file (written atomically, never over an input) or to stdout.
 */
import { resolve } from 'node:path';
import { writeFileAtomic } from '../core/files';
import type { CliIo } from './io';

/** Write text to `out` (a path, atomically) or print it. Returns a one-line note for the user. */
export function emit(io: CliIo, text: string, out: string | undefined, inputs: readonly string[]): void {
  if (out === undefined) {
    io.stdout(text.endsWith('\n') ? text : `${text}\n`);
    return;
  }
  writeFileAtomic(resolve(io.cwd, out), text, inputs.map((i) => resolve(io.cwd, i)));
}

/** JSON with typed arrays as plain arrays and numbers rounded to `digits` significant digits. */
export function toJson(value: unknown, digits = 10): string {
  return JSON.stringify(value, (_key, v) => {
    if (ArrayBuffer.isView(v) && !(v instanceof DataView)) return Array.from(v as unknown as ArrayLike<number>, (x) => round(x, digits));
    if (typeof v === 'number') return round(v, digits);
    return v;
  }, 2);
}

function round(x: number, digits: number): number | null {
  if (!Number.isFinite(x)) return null;
  if (x === 0) return 0;
  return Number(x.toPrecision(digits));
}

/** Fixed-width text table. */
export function textTable(header: string[], rows: (string | number)[][]): string {
  const cells = [header, ...rows.map((r) => r.map(String))];
  const widths = header.map((_, c) => Math.max(...cells.map((r) => r[c].length)));
  const line = (r: string[]) => r.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
  return [line(cells[0]), widths.map((w) => '-'.repeat(w)).join('  '), ...cells.slice(1).map(line)].join('\n') + '\n';
}
