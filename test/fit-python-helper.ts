/**
 * Test helper: run a short Python program with the Debian reference libraries (python3-scipy,
 * python3-numpy) through /usr/bin/python3 and parse the JSON it prints. Tests that need it skip
 * with a message when /usr/bin/python3 or scipy is missing.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

export const PYTHON = '/usr/bin/python3';

/** True when /usr/bin/python3 can import scipy and numpy. */
export const HAVE_SCIPY: boolean =
  existsSync(PYTHON) && spawnSync(PYTHON, ['-c', 'import scipy.optimize, scipy.special, scipy.stats, numpy'], { encoding: 'utf8' }).status === 0;

/** Run `program` (Python source, reading JSON input from stdin) and return its JSON output. */
export function runPython<T>(program: string, input: unknown = null): T {
  const res = spawnSync(PYTHON, ['-c', program], { input: JSON.stringify(input), encoding: 'utf8', maxBuffer: 64 << 20 });
  if (res.status !== 0) throw new Error(`python failed: ${res.stderr}`);
  return JSON.parse(res.stdout) as T;
}
