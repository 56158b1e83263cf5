/**
 * Presenting a ranking: the ranked table as plain text, Markdown and CSV, and the JSON document
 * `{"candidates": [{"name", "file", "files", "rank", "verdict", "stats", "fit", ...}], "warnings",
 * "settings", "provenance"}`, written piece by piece (a candidate at a time, full records read back from the
 * stream files) so that memory does not grow with the number of candidates.
 */
import { closeSync, fsyncSync, mkdirSync, openSync, renameSync, unlinkSync, writeSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { InputError } from '../core/errors';
import type { Provenance } from '../core/provenance';
import { approximateScatteringWarning } from '../scatter/provider';
import { defaultProviders } from '../scatter/registry';
import type { FitSummary } from './evaluate';
import type { AssembledRanking, RankingEntry } from './run';
import { readRecordAt } from './stream';

export type TableFormat = 'text' | 'markdown' | 'csv';

const HEADER = ['rank', 'candidate', 'verdict', 'p', 'test', 'R-factor', 'reduced chi2', 'AIC', 'BIC', 'varied', 'N_ind', 'stage'];

function fmt(x: number | null | undefined, digits = 4): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '-';
  if (x !== 0 && (Math.abs(x) >= 1e5 || Math.abs(x) < 1e-3)) return x.toExponential(digits - 1);
  return Number(x.toPrecision(digits)).toString();
}

function pText(e: RankingEntry): string {
  if (!e.test || !Number.isFinite(e.test.pValue)) return '-';
  const p = e.test.pValue;
  return p < 1e-4 ? '<1e-4' : fmt(p, 2);
}

function testText(e: RankingEntry): string {
  if (e.equivalentTo && e.verdict !== 'best') return 'within resolution';
  if (!e.test) return e.error ? 'failed' : '-';
  return e.test.method === 'variance-ratio' ? 'F ratio' : e.test.method === 'hamilton' ? 'Hamilton' : '-';
}

/** The cells of one row. */
export function rowCells(e: RankingEntry): string[] {
  const s = e.stats;
  const rank = e.equivalentTo ? `=${e.rank}` : String(e.rank);
  return [rank, e.name, e.error ? `${e.verdict} (${e.error})` : e.verdict, pText(e), testText(e), fmt(s?.rFactor), fmt(s?.reducedChiSquare),
    fmt(s?.aic), fmt(s?.bic), s ? String(s.nVaried) : '-', s ? fmt(s.nIndependent, 3) : '-', e.stage];
}

/**
 * One CSV cell. A text cell starting with = + - @, a tab or a carriage return gets a leading
 * apostrophe so that a spreadsheet shows it instead of running it as a formula (OWASP, "CSV
 * Injection"); numbers and the "-" of a missing value are left alone.
 */
function csvCell(text: string): string {
  const number = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(text);
  const cell = /^[=+\-@\t\r]/.test(text) && !number && text !== '-' ? `'${text}` : text;
  return /[",\n]/.test(cell) ? `"${cell.replace(/"/g, '""')}"` : cell;
}

function mdCell(text: string): string {
  return text.replace(/\|/g, '\\|');
}

/**
 * The ranked table. `limit` keeps the first rows (text only; the files hold every row) and adds
 * a line saying how many were left out.
 */
export function rankingTable(ranking: AssembledRanking, format: TableFormat, limit = Infinity): string {
  const rows = ranking.entries.slice(0, format === 'text' ? limit : Infinity).map(rowCells);
  if (format === 'csv') {
    return [HEADER, ...rows].map((r) => r.map(csvCell).join(',')).join('\n') + '\n';
  }
  if (format === 'markdown') {
    const lines = [`| ${HEADER.join(' | ')} |`, `| ${HEADER.map((_, i) => (i === 1 || i === 2 || i === 4 || i === 11 ? '---' : '---:')).join(' | ')} |`];
    for (const r of rows) lines.push(`| ${r.map(mdCell).join(' | ')} |`);
    return lines.join('\n') + '\n';
  }
  const cells = [HEADER, ...rows];
  const widths = HEADER.map((_, c) => Math.max(...cells.map((r) => r[c].length)));
  const line = (r: string[]) => r.map((cell, c) => (c === 1 || c === 2 || c === 4 || c === 11 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ').trimEnd();
  const out = [line(HEADER), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)];
  const left = ranking.entries.length - rows.length;
  if (left > 0) out.push(`... ${left} more candidate${left === 1 ? '' : 's'} (every row is in ranking.csv and ranking.md)`);
  return out.join('\n') + '\n';
}

/** Round numbers for JSON (10 significant digits), typed arrays as plain arrays, non-finite as null. */
function jsonReplacer(_key: string, v: unknown): unknown {
  if (ArrayBuffer.isView(v) && !(v instanceof DataView)) return Array.from(v as unknown as ArrayLike<number>, (x) => (Number.isFinite(x) ? Number(x.toPrecision(10)) : null));
  if (typeof v === 'number') return Number.isFinite(v) ? (v === 0 ? 0 : Number(v.toPrecision(10))) : null;
  return v;
}

/** The JSON object of one candidate (its fit summary read back from the stream). */
export function candidateDocument(e: RankingEntry): Record<string, unknown> {
  const record = readRecordAt(e.stage === 'refine' && e.records.refine ? e.records.refine : e.records.prescreen);
  const fit: FitSummary | null = record.fit;
  const doc: Record<string, unknown> = { name: e.name, file: e.file };
  if (record.files) doc.files = record.files;
  if (record.components) doc.components = record.components;
  if (e.frame !== undefined) doc.frame = e.frame;
  if (record.tables) doc.tables = record.tables;
  doc.key = e.key;
  doc.rank = e.rank;
  doc.verdict = e.verdict;
  doc.stage = e.stage;
  doc.test = e.test;
  if (e.equivalentTo) doc.equivalentTo = e.equivalentTo;
  if (e.error) doc.error = e.error;
  doc.stats = e.stats;
  doc.prescreenStats = e.prescreenStats;
  doc.fit = fit;
  return doc;
}

/**
 * Warnings about a whole ranking: scattering from an approximate provider (named in
 * `settings.provider`) makes every score and fitted value an illustration, not a result.
 */
export function rankingWarnings(settings: Record<string, unknown>): string[] {
  const registry = defaultProviders({ cache: false });
  const name = settings.provider;
  if (typeof name !== 'string' || !registry.names().includes(name)) return [];
  return registry.get(name).approximate ? [approximateScatteringWarning(name)] : [];
}

/**
 * Write the JSON document in pieces through `write` (a file or stdout): memory stays flat in the
 * number of candidates.
 */
export function writeRankingJson(ranking: AssembledRanking, settings: Record<string, unknown>, provenance: Provenance, write: (text: string) => void): void {
  write('{\n  "candidates": [');
  ranking.entries.forEach((e, i) => {
    const text = JSON.stringify(candidateDocument(e), jsonReplacer, 2).replace(/\n/g, '\n    ');
    write(`${i === 0 ? '\n    ' : ',\n    '}${text}`);
  });
  write(`${ranking.entries.length > 0 ? '\n  ' : ''}],\n  "warnings": ${JSON.stringify(rankingWarnings(settings))},\n`);
  write(`  "settings": ${JSON.stringify(settings, jsonReplacer, 2).replace(/\n/g, '\n  ')},\n`);
  write(`  "provenance": ${JSON.stringify(provenance, jsonReplacer, 2).replace(/\n/g, '\n  ')}\n}\n`);
}

/**
 * Write a file piece by piece, atomically (temporary file in the same folder, then rename), never
 * over one of `protectedInputs`.
 */
export function writeFileInPieces(path: string, produce: (write: (text: string) => void) => void, protectedInputs: readonly string[] = []): void {
  const target = resolve(path);
  for (const input of protectedInputs) {
    if (resolve(input) === target) throw new InputError('refusing to overwrite an input file', { file: path });
  }
  mkdirSync(dirname(target), { recursive: true });
  const temporary = join(dirname(target), `.${basename(target)}.${process.pid}.${Date.now()}.tmp`);
  const fd = openSync(temporary, 'w');
  try {
    produce((text) => void writeSync(fd, text));
    fsyncSync(fd);
    closeSync(fd);
    renameSync(temporary, target);
  } catch (error) {
    try { closeSync(fd); } catch { /* closed */ }
    try { unlinkSync(temporary); } catch { /* gone */ }
    throw error;
  }
}
