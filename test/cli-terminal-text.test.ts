/**
 * Error messages never pass terminal escape sequences or other control characters through: a file
 * name or file content holding ESC [ ... m (ECMA-48 control sequences, from memory) is shown
 * escaped, on one line.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { escapeForTerminal } from '../src/cli/terminal-text';
import { cli } from './helpers/cli';

describe('control characters in error messages', () => {
  it('a missing file whose name holds an escape sequence: exit 2, the ESC shown as \\x1b', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-escape-'));
    const run = await cli(['shells', 'evil\u001b[2J\u001b]0;title\u0007.xyz', '--absorber', 'Cu'], dir);
    expect(run.code).toBe(2);
    expect(run.stderr).not.toMatch(/[\u0000-\u0009\u000b-\u001f\u007f-\u009f]/);
    expect(run.stderr).toContain('evil\\x1b[2J\\x1b]0;title\\x07.xyz');
    expect(run.stderr.trimEnd().split('\n')).toHaveLength(1);
  });

  it('a bad line of a structure file echoing raw bytes stays one escaped line', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-escape-'));
    writeFileSync(join(dir, 'bad.xyz'), '2\ncomment\nCu 0 0 0\nCu\u001b[31m 0 0 x\u009b\n');
    const run = await cli(['shells', join(dir, 'bad.xyz'), '--absorber', 'Cu'], dir);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/bad\.xyz:4: .*Cu\\x1b\[31m/);
    expect(run.stderr).not.toMatch(/[\u001b\u009b]/);
  });

  it('escapes C0, DEL, C1 and bidi overrides, leaves other text alone', () => {
    expect(escapeForTerminal('a\tb\nc\u007fd\u0085e\u202ef Å')).toBe('a\\x09b\\x0ac\\x7fd\\x85e\\u202ef Å');
  });
});
