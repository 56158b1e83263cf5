/**
 * Provenance records: every result says which code version, settings and inputs made it.
 */
import { readFileSync } from 'node:fs';
import { hashOf } from './hash';

/** Version of the package, read once from package.json beside src/. */
export const SHELLRANK_VERSION: string = (() => {
  try {
    const pkg = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8'));
    return String(pkg.version);
  } catch {
    return 'unknown';
  }
})();

/** One input of a result: a file (by content hash) or an in-memory object (by value hash). */
export interface InputRecord {
  role: string;
  file?: string;
  sha256: string;
}

/** What produced a result. */
export interface Provenance {
  tool: 'shellrank';
  version: string;
  /** The settings of the stage, exactly as used (defaults filled in). */
  settings: Record<string, unknown>;
  inputs: InputRecord[];
  /** Hash of settings + inputs: two results with the same id came from the same computation. */
  id: string;
}

export function makeProvenance(settings: Record<string, unknown>, inputs: InputRecord[]): Provenance {
  return {
    tool: 'shellrank',
    version: SHELLRANK_VERSION,
    settings,
    inputs,
    id: hashOf({ version: SHELLRANK_VERSION, settings, inputs }).slice(0, 16),
  };
}
