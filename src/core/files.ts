/**
 * File helpers: reading user files with errors that name them, and writing results atomically
 * (temporary file in the same folder, then rename), so a failed run never leaves partial output
 * and an input is never overwritten.
 */
import { closeSync, existsSync, fsyncSync, mkdirSync, openSync, readFileSync, realpathSync, renameSync, statSync, unlinkSync, writeSync } from 'node:fs';
import { dirname, basename, join, resolve } from 'node:path';
import { InputError } from './errors';

/** Read a text file as UTF-8; InputError naming the file when it is missing or unreadable. */
export function readTextFile(path: string): string {
  let stat;
  try {
    stat = statSync(path);
  } catch {
    throw new InputError('no such file', { file: path });
  }
  if (stat.isDirectory()) throw new InputError('is a folder, not a file', { file: path });
  try {
    return readFileSync(path, 'utf8');
  } catch (e) {
    throw new InputError(`cannot read (${(e as NodeJS.ErrnoException).code ?? 'error'})`, { file: path });
  }
}

/**
 * Write `content` to `path` atomically. Refuses to overwrite any path listed in `protectedInputs`
 * (the run's input files), compared after resolving links. A character device (a terminal, a null
 * device) is written directly, since renaming over it would replace the device by a regular file;
 * FIFOs, sockets and block devices are refused (a FIFO without a reader would block forever).
 */
export function writeFileAtomic(path: string, content: string | Uint8Array, protectedInputs: readonly string[] = []): void {
  const target = resolve(path);
  const targetReal = existsSync(target) ? realpathSync(target) : target;
  for (const input of protectedInputs) {
    const inputReal = existsSync(input) ? realpathSync(input) : resolve(input);
    if (inputReal === targetReal) throw new InputError('refusing to overwrite an input file', { file: path });
  }
  const existing = existsSync(target) ? statSync(targetReal) : undefined;
  if (existing !== undefined && existing.isCharacterDevice()) return writeDirectly(target, content, path);
  if (existing !== undefined && existing.isDirectory()) throw new InputError('is a folder, not a file', { file: path });
  if (existing !== undefined && !existing.isFile()) throw new InputError('not a regular file (FIFO, socket or block device); refusing to write to it', { file: path });
  const folder = dirname(target);
  try {
    mkdirSync(folder, { recursive: true });
  } catch {
    throw new InputError('cannot create the output folder', { file: path });
  }
  const temporary = join(folder, `.${basename(target)}.${process.pid}.${Date.now()}.tmp`);
  try {
    const fd = openSync(temporary, 'w');
    try {
      writeSync(fd, typeof content === 'string' ? Buffer.from(content, 'utf8') : content);
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
    renameSync(temporary, target);
  } catch (e) {
    try { unlinkSync(temporary); } catch { /* already gone */ }
    if (e instanceof InputError) throw e;
    throw new InputError(`cannot write (${(e as NodeJS.ErrnoException).code ?? 'error'})`, { file: path });
  }
}

/** Write to an existing character device without creating or renaming anything. */
function writeDirectly(target: string, content: string | Uint8Array, shownPath: string): void {
  try {
    const fd = openSync(target, 'w');
    try {
      writeSync(fd, typeof content === 'string' ? Buffer.from(content, 'utf8') : content);
    } finally {
      closeSync(fd);
    }
  } catch (e) {
    throw new InputError(`cannot write (${(e as NodeJS.ErrnoException).code ?? 'error'})`, { file: shownPath });
  }
}
