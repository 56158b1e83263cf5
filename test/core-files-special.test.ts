/**
 * writeFileAtomic on targets that are not regular files: a device or FIFO must never be replaced
 * by a regular file (rename over it). The rule is common practice, no source: atomic replacement
 * is only meaningful for regular files.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeFileAtomic } from '../src/core/files';
import { InputError } from '../src/core/errors';

function tryMake(command: string, args: string[]): boolean {
  try {
    execFileSync(command, args, { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

describe('writeFileAtomic onto non-regular files', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-files-'));
    return () => rmSync(dir, { recursive: true, force: true });
  });

  it('refuses a FIFO and leaves it a FIFO', () => {
    const fifo = join(dir, 'pipe');
    if (!tryMake('mkfifo', [fifo])) return void console.warn('mkfifo unavailable; skipped');
    expect(() => writeFileAtomic(fifo, 'x')).toThrow(InputError);
    expect(() => writeFileAtomic(fifo, 'x')).toThrow(/not a regular file/);
    expect(statSync(fifo).isFIFO()).toBe(true);
  });

  it('writes a character device directly: a full device (1,7) gives an InputError and stays a device', () => {
    const full = join(dir, 'full');
    if (!tryMake('mknod', [full, 'c', '1', '7'])) return void console.warn('mknod not permitted; skipped');
    expect(() => writeFileAtomic(full, 'x')).toThrow(/cannot write \(ENOSPC\)/);
    expect(statSync(full).isCharacterDevice()).toBe(true);
  });

  it('writes a null device (1,3) directly without replacing it', () => {
    const nul = join(dir, 'null');
    if (!tryMake('mknod', [nul, 'c', '1', '3'])) return void console.warn('mknod not permitted; skipped');
    writeFileAtomic(nul, 'x');
    expect(statSync(nul).isCharacterDevice()).toBe(true);
  });

  it('still replaces a regular file atomically', () => {
    const file = join(dir, 'plain.txt');
    writeFileSync(file, 'old');
    writeFileAtomic(file, 'new');
    expect(statSync(file).isFile()).toBe(true);
  });
});
