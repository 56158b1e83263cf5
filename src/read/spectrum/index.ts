/**
 * Reading measured spectra: the format registry (XDI, plain/CSV columns) and `readScan`.
 * A format is chosen by explicit name, then by content (an XDI version line), then by extension.
 */
import { InputError } from '../../core/errors';
import { readTextFile } from '../../core/files';
import { parseColumns } from './columns';
import type { SpectrumDocument } from './document';
import { scanFromDocument, type ScanReadOptions } from './scan-from-document';
import type { Scan } from './scan';
import { looksLikeXdi, parseXdi } from './xdi';

export interface SpectrumFormat {
  name: 'xdi' | 'columns';
  description: string;
  /** Lower-case extensions with the dot. */
  extensions: readonly string[];
  sniff(text: string): boolean;
  read(text: string, file: string): SpectrumDocument;
}

export const SPECTRUM_FORMATS: readonly SpectrumFormat[] = [
  { name: 'xdi', description: 'XAS Data Interchange (XDI 1.0)', extensions: ['.xdi'], sniff: looksLikeXdi, read: parseXdi },
  {
    name: 'columns',
    description: 'plain whitespace or comma-separated columns with a header line',
    extensions: ['.dat', '.txt', '.csv', '.tsv'],
    sniff: () => true,
    read: parseColumns,
  },
];

export interface ReadScanOptions extends ScanReadOptions {
  /** Force a format by registry name. */
  format?: 'xdi' | 'columns';
}

/** Choose the format: explicit name, then content, then extension, then plain columns. */
export function chooseSpectrumFormat(text: string, file: string, format?: string): SpectrumFormat {
  if (format !== undefined) {
    const f = SPECTRUM_FORMATS.find((x) => x.name === format);
    if (!f) throw new InputError(`unknown spectrum format '${format}' (known: ${SPECTRUM_FORMATS.map((x) => x.name).join(', ')})`, { key: 'format' });
    return f;
  }
  if (looksLikeXdi(text)) return SPECTRUM_FORMATS[0];
  const lower = file.toLowerCase();
  const byExt = SPECTRUM_FORMATS.find((f) => f.extensions.some((e) => lower.endsWith(e)));
  return byExt ?? SPECTRUM_FORMATS[1];
}

/** Parse text already in memory into a Scan. */
export function readScanText(text: string, file: string, options: ReadScanOptions = {}): Scan {
  const doc = chooseSpectrumFormat(text, file, options.format).read(text, file);
  return scanFromDocument(doc, options);
}

/**
 * Read a measured spectrum file into a Scan.
 * @throws InputError naming the file (and line) for any problem; warnings go to `scan.info.warnings`.
 */
export function readScan(path: string, options: ReadScanOptions = {}): Scan {
  return readScanText(readTextFile(path), path, options);
}

export { parseXdi, formatXdi, type XdiDocument, type XdiContent, XDI_RECOMMENDED_FIELDS } from './xdi';
export { parseColumns, type ColumnsDocument } from './columns';
export { scanFromDocument, roleOfLabel, HC_EV_ANGSTROM, type ScanReadOptions } from './scan-from-document';
export { makeScan, shiftScanEnergy, removeScanPoints, MIN_SCAN_POINTS } from './scan';
export type { Scan, ScanInfo, ScanInit, ScanSignal, ScanStep, ColumnRole, EnergyAxisReport } from './scan';
export type { SpectrumDocument, ReadWarning } from './document';
