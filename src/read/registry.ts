/**
 * The structure-format registry: one entry per format (name, description, extensions,
 * content sniffing, read). A format is chosen by explicit name, then by content, then by
 * extension (after ASE's io registry).
 */
import type { Structure } from '../structure/structure';

export interface StructureFormat {
  /** Registry key, e.g. "xyz", "extxyz", "cif", "pdb". */
  name: string;
  description: string;
  /** Lower-case extensions with the dot, e.g. [".cif"]. */
  extensions: readonly string[];
  /** True when the text looks like this format (cheap: look at the first lines). */
  sniff(text: string): boolean;
  /** Parse all frames. Throws InputError naming file and line on malformed input. */
  read(text: string, file: string): Structure[];
  /** Write one frame (optional). */
  write?(structure: Structure): string;
}
