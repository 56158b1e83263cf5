/**
 * Running reference computations in Debian's Python (/usr/bin/python3 with python3-ase,
 * python3-scipy, python3-xraylib, python3-spglib). Tests that need a module skip when it is absent.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

export const DEBIAN_PYTHON = '/usr/bin/python3';

/** True when /usr/bin/python3 can import every named module. */
export function hasPythonModules(...modules: string[]): boolean {
  if (!existsSync(DEBIAN_PYTHON)) return false;
  const r = spawnSync(DEBIAN_PYTHON, ['-c', modules.map((m) => `import ${m}`).join('; ')], { encoding: 'utf8' });
  return r.status === 0;
}

/** Run a Python script that reads JSON from stdin and prints JSON; returns the parsed output. */
export function runPython<T>(script: string, input: unknown = null): T {
  const r = spawnSync(DEBIAN_PYTHON, ['-c', script], { input: JSON.stringify(input), encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 });
  if (r.status !== 0) throw new Error(`python failed: ${r.stderr}`);
  return JSON.parse(r.stdout) as T;
}
