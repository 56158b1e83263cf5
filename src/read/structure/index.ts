/**
 * The structure readers: registry, format detection and the read front door.
 *
 * A format is chosen by explicit name, then by content (each format's sniff, in registry order:
 * extended XYZ before plain XYZ, since every extended XYZ file also looks like plain XYZ), then
 * by file extension (the order of ASE's io registry).
 */
import { InputError } from '../../core/errors';
import { readTextFile } from '../../core/files';
import type { StructureFormat } from '../registry';
import type { Structure } from '../../structure/structure';
import { CIF_FORMAT } from './cif';
import { EXTXYZ_FORMAT } from './extxyz';
import { PDB_FORMAT } from './pdb';
import { XYZ_FORMAT } from './xyz';

export { CIF_FORMAT, readCif, writeCif, parseCifBlocks, parseSymmetryOperation, CIF_MERGE_TOLERANCE } from './cif';
export { EXTXYZ_FORMAT, readExtxyz, writeExtxyz } from './extxyz';
export { PDB_FORMAT, readPdb } from './pdb';
export { XYZ_FORMAT, readXyz, writeXyz } from './xyz';

/** All structure formats, in content-sniffing order. */
export const STRUCTURE_FORMATS: readonly StructureFormat[] = Object.freeze([EXTXYZ_FORMAT, XYZ_FORMAT, CIF_FORMAT, PDB_FORMAT]);

/** Names of the registered formats. */
export const STRUCTURE_FORMAT_NAMES: readonly string[] = Object.freeze(STRUCTURE_FORMATS.map((f) => f.name));

/** How a format was chosen. */
export type FormatChoice = 'name' | 'content' | 'extension';

/** A chosen format and how it was chosen. */
export interface FormatDetection {
  format: StructureFormat;
  detectedBy: FormatChoice;
}

/** The registered format with this name (case-insensitive), or undefined. */
export function structureFormatByName(name: string): StructureFormat | undefined {
  const lower = name.trim().toLowerCase();
  return STRUCTURE_FORMATS.find((f) => f.name === lower);
}

function extensionOf(file: string): string {
  const base = file.replace(/^.*[\\/]/, '');
  const dot = base.lastIndexOf('.');
  return dot > 0 ? base.slice(dot).toLowerCase() : '';
}

/**
 * Choose the format of a structure file: the explicit name when given, else the first format
 * whose content test accepts the text, else the one that owns the file extension.
 *
 * @throws InputError (key "format") for an unknown explicit name, or when neither the content
 * nor the extension identifies a format; the message says what was tried.
 */
export function detectStructureFormatWithReason(text: string, file: string, explicit?: string): FormatDetection {
  const names = STRUCTURE_FORMAT_NAMES.join(', ');
  if (explicit !== undefined) {
    const format = structureFormatByName(explicit);
    if (!format) throw new InputError(`unknown structure format '${explicit}' (known: ${names})`, { file, key: 'format' });
    return { format, detectedBy: 'name' };
  }
  for (const format of STRUCTURE_FORMATS) {
    if (format.sniff(text)) return { format, detectedBy: 'content' };
  }
  const extension = extensionOf(file);
  const byExtension = STRUCTURE_FORMATS.find((f) => f.extensions.includes(extension));
  if (byExtension) return { format: byExtension, detectedBy: 'extension' };
  const known = STRUCTURE_FORMATS.flatMap((f) => f.extensions).join(', ');
  throw new InputError(
    `cannot tell the structure format: the content matches none of ${names}, and the extension `
    + `${extension ? `'${extension}'` : '(none)'} is not one of ${known}; give the format by name`,
    { file, line: 1, key: 'format' },
  );
}

/** {@link detectStructureFormatWithReason} without the reason. */
export function detectStructureFormat(text: string, file: string, explicit?: string): StructureFormat {
  return detectStructureFormatWithReason(text, file, explicit).format;
}

export interface ReadStructureOptions {
  /** Format name (one of {@link STRUCTURE_FORMAT_NAMES}); detected from content and extension when absent. */
  format?: string;
}

/**
 * Read every frame of structure text.
 *
 * @param file the path shown in error messages and kept in info.file.
 * @returns at least one frame.
 * @throws InputError with the file and (where one exists) the 1-based line.
 */
export function readStructureText(text: string, file: string, options: ReadStructureOptions = {}): Structure[] {
  const { format } = detectStructureFormatWithReason(text, file, options.format);
  return format.read(text, file);
}

/** Read every frame of a structure file (UTF-8). See {@link readStructureText}. */
export function readStructureFile(path: string, options: ReadStructureOptions = {}): Structure[] {
  return readStructureText(readTextFile(path), path, options);
}
