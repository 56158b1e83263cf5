/**
 * The lazy command table of src/cli/commands/index.ts: each entry loads the module that registers
 * exactly the command it is named after, the full help still lists every command, and a bare
 * `--version` (answered by bin/shellrank.js before the TypeScript loader starts) prints the
 * version of package.json, the same as the in-process CLI. Start-up time itself is measured by
 * `npm run bench:startup`, never asserted here.
 */
import { readFileSync } from 'node:fs';
import { Command } from 'commander';
import { describe, expect, it } from 'vitest';
import { COMMANDS } from '../src/cli/commands/index';
import { cli, cliProcess, REPO } from './helpers/cli';

const version = JSON.parse(readFileSync(`${REPO}package.json`, 'utf8')).version as string;
const quietIo = { stdout: () => {}, stderr: () => {}, isTty: false, cwd: REPO };

describe('lazy command table', () => {
  it('each entry registers one command, under the name the table gives it', async () => {
    expect(new Set(COMMANDS.map((c) => c.name)).size).toBe(COMMANDS.length);
    for (const entry of COMMANDS) {
      const program = new Command();
      (await entry.load())(program, quietIo);
      expect(program.commands.map((c) => c.name())).toEqual([entry.name]);
    }
  });

  it('the full help lists every command of the table', async () => {
    const run = await cli(['--help']);
    expect(run.code).toBe(0);
    for (const entry of COMMANDS) expect(run.stdout).toMatch(new RegExp(`^  ${entry.name} `, 'm'));
  });

  it('an unknown command is still refused with a suggestion (exit 2)', async () => {
    const run = await cli(['shels']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/unknown command 'shels'/);
    expect(run.stderr).toMatch(/Did you mean shells\?/);
  });

  it('--version prints the package version, in process and from the binary', async () => {
    const inProcess = await cli(['--version']);
    expect(inProcess).toEqual({ code: 0, stdout: `${version}\n`, stderr: '' });
    expect(cliProcess(['--version'])).toEqual({ code: 0, stdout: `${version}\n`, stderr: '' });
    expect(cliProcess(['-V'])).toEqual({ code: 0, stdout: `${version}\n`, stderr: '' });
  });
});
