/**
 * Loading a structure file: read, detect the format, parse every frame, and hash the content
 * for provenance.
 */
import { sha256 } from '../core/hash';
import { InputError } from '../core/errors';
import { readTextFile } from '../core/files';
import type { Structure } from '../structure/structure';
import { readStructureText } from './structure/index';

export interface LoadedStructure {
  file: string;
  sha256: string;
  frames: Structure[];
}

export function loadStructureFile(path: string, options: { format?: string } = {}): LoadedStructure {
  const text = readTextFile(path);
  const frames = readStructureText(text, path, { format: options.format });
  if (frames.length === 0) throw new InputError('holds no atoms', { file: path });
  return { file: path, sha256: sha256(text), frames };
}

/** Pick one frame (0-based); InputError naming the file when out of range. */
export function pickFrame(loaded: LoadedStructure, frame: number): Structure {
  if (!Number.isInteger(frame) || frame < 0 || frame >= loaded.frames.length) {
    throw new InputError(`frame ${frame} does not exist (the file has ${loaded.frames.length})`, { file: loaded.file, key: '--frame' });
  }
  return loaded.frames[frame];
}
