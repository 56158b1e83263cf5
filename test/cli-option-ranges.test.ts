/**
 * Options out of their meaningful range are refused before any computation, with exit 2 and a
 * message naming the option. The bounds are shellrank's own (common practice, no source): a
 * window taper no wider than its range, a table step in (0, 0.5] Å, at most 1000 fit starts,
 * each k-weight once, one output format at a time.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chiToJson } from '../src/reduce/index';
import { cli, REPO, TEST_DATA } from './helpers/cli';
import { clusterOf, syntheticChi, xyzFrame, type Shell } from './helpers/rank-synthetic';

const A: Shell[] = [{ species: 'O', n: 4, r: 1.95 }, { species: 'Fe', n: 8, r: 3.1 }];

describe('option ranges', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-options-'));
    mkdirSync(join(dir, 'candidates'));
    writeFileSync(join(dir, 'candidates', 'a.xyz'), xyzFrame(clusterOf(A), 'A'));
    writeFileSync(join(dir, 'a.json'), chiToJson(syntheticChi(clusterOf(A), 2, 0.001)));
    return () => rmSync(dir, { recursive: true, force: true });
  });

  const rank = (extra: string[]) => cli(['rank', join(dir, 'a.json'), join(dir, 'candidates'), '--absorber', '#0', '--provider', 'parametric', '--workers', '0', ...extra], dir);

  it.each([
    [['--taper', '100'], /--taper: .*wider than the k range/],
    [['--r-taper', '50'], /--r-taper: .*wider than the R range/],
    [['--tables', 'shared', '--table-step', '0'], /--table-step: must be greater than 0/],
    [['--tables', 'shared', '--table-step', '3'], /--table-step: must be at most 0.5/],
    [['--starts', '100000000'], /--starts: must be at most 1000/],
    [['--kw', '2,2'], /--kw: k-weight 2 is given twice/],
    [['--json', '--csv'], /--json, --markdown, --csv: give one of them only/],
  ])('rank %j is refused', async (extra, message) => {
    const run = await rank(extra as string[]);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(message as RegExp);
    expect(run.stdout).toBe('');
  }, 60_000);

  it.each([
    [['--starts', '100000000'], /--starts: must be at most 1000/],
  ])('fit %j is refused', async (extra, message) => {
    const run = await cli(['fit', join(TEST_DATA, 'cu_metal_rt.xdi'), join(REPO, 'test/fixtures/structures/cu-p1.cif'), '--absorber', 'Cu', '--provider', 'parametric', ...(extra as string[])]);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(message as RegExp);
  }, 60_000);
});
