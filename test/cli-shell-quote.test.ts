/**
 * Printed command lines can be pasted into a shell: src/cli/shell-quote.ts checked against the
 * POSIX shell itself (/bin/sh splits the quoted line back into the arguments) and against Python's
 * shlex.quote (standard library), which follows the same single-quote rule.
 */
import { describe, it, expect } from 'vitest';
import { spawnSync } from 'node:child_process';
import fc from 'fast-check';
import { shellCommand, shellQuote } from '../src/cli/shell-quote';
import { runPython } from './helpers/python';

/** The arguments /bin/sh sees when it runs `printf '%s\0'` followed by the quoted line. */
function shellSplit(line: string): string[] {
  const r = spawnSync('/bin/sh', ['-c', `printf '%s\\0' ${line}`], { encoding: 'utf8' });
  expect(r.status, r.stderr).toBe(0);
  return r.stdout.split('\0').slice(0, -1);
}

describe('shellQuote', () => {
  it("quotes what the shell would change: '#0' (a comment), spaces, quotes, globs, $ and ~", () => {
    const args = ['--absorber', '#0', 'a b', "it's", '*.xyz', '$HOME', '~', 'x;y', 'a|b', '(1)', '', 'mixture.xyz#2,b.xyz', 'ünïcode'];
    expect(shellQuote('#0')).toBe("'#0'");
    expect(shellQuote('--absorber')).toBe('--absorber');
    expect(shellQuote('structures/a-1.xyz')).toBe('structures/a-1.xyz');
    expect(shellSplit(shellCommand(args))).toEqual(args);
  });

  it('survives a round trip through /bin/sh for random arguments (property test)', () => {
    const arg = fc.string({ unit: fc.constantFrom(...'ab #\'"\\$`*?[]~;&|<>(){}!\n\t=%,:.-/é'.split('')), maxLength: 12 });
    fc.assert(fc.property(fc.array(arg, { minLength: 1, maxLength: 5 }), (args) => {
      expect(shellSplit(shellCommand(args))).toEqual(args);
    }), { numRuns: 60, seed: 14 });
  });

  it("agrees with Python's shlex.quote on which arguments need quotes and how (no single quote inside: shlex writes it as '\"'\"')", () => {
    const args = ['#0', 'plain', 'a b', '', '--k', '3:14', 'x=y', '@file', '50%', 'a,b', '~user', '!', 'under_score', 'é'];
    const expected = runPython<string[]>('import json, shlex, sys\nprint(json.dumps([shlex.quote(a) for a in json.load(sys.stdin)]))', args);
    expect(args.map(shellQuote)).toEqual(expected);
  });
});
