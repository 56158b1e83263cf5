/**
 * The common result of the spectrum readers before column roles are assigned: labelled numeric
 * columns, the file's metadata fields, its free comments and the warnings met while reading.
 * src/read/spectrum/scan-from-table.ts turns a document into a {@link Scan}.
 */
import type { NumericTable } from './table';

/** A warning met while reading: what is unusual, and where (1-based line) when known. */
export interface ReadWarning {
  line?: number;
  message: string;
}

/** Format a warning as one line, "file:line: message". */
export function formatWarning(file: string, warning: ReadWarning): string {
  return warning.line !== undefined ? `${file}:${warning.line}: ${warning.message}` : `${file}: ${warning.message}`;
}

export interface SpectrumDocument {
  /** Registry name of the format that read it. */
  format: 'xdi' | 'columns';
  /** Path as given by the caller. */
  file: string;
  /** SHA-256 of the file's text. */
  sha256: string;
  /** One label per data column (never empty; unnamed columns are `colN`, N 1-based). */
  labels: string[];
  /** Unit of each column as the file states it, or null. */
  units: (string | null)[];
  table: NumericTable;
  /** Metadata fields, `Family.key` -> value, keys as written in the file. */
  fields: Record<string, string>;
  /** Free-text user comments, lines joined with "\n" ('' when there are none). */
  comments: string;
  warnings: ReadWarning[];
}

/** Case-insensitive look-up of a `Family.key` field. */
export function fieldValue(fields: Record<string, string>, key: string): string | undefined {
  const wanted = key.toLowerCase();
  for (const k of Object.keys(fields)) if (k.toLowerCase() === wanted) return fields[k];
  return undefined;
}
