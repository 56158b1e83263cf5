/** Run the CLI in-process (fast) or as a child process (true end-to-end). */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { runCli } from '../../src/cli/main';

export const REPO = fileURLToPath(new URL('../../', import.meta.url));
/** The public-domain measured spectra copied into the project (test/data/SOURCE.md). */
export const TEST_DATA = fileURLToPath(new URL('../data/', import.meta.url));

export interface CliRun { code: number; stdout: string; stderr: string }

export async function cli(args: string[], cwd = REPO): Promise<CliRun> {
  let stdout = '', stderr = '';
  const code = await runCli(args, { stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), isTty: false, cwd });
  return { code, stdout, stderr };
}

/** The real binary, as a user runs it. */
export function cliProcess(args: string[], cwd = REPO): CliRun {
  const r = spawnSync(process.execPath, [`${REPO}bin/shellrank.js`, ...args], { cwd, encoding: 'utf8' });
  return { code: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}
