/**
 * The parametric provider's closed-form scattering functions are approximate (src/scatter/parametric.ts
 * says so in its table info): fitting measured data with them gives numbers that look real but are
 * not, so every result made with them says so, in the text and in the JSON warnings. Data: the
 * measured Cu foil of test/data (see test/data/SOURCE.md); fcc Cu from test/fixtures.
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { cli, REPO } from './helpers/cli';
import { rankingWarnings } from '../src/rank/output';
import { defaultProviders } from '../src/scatter/registry';

const cuData = join(REPO, 'test/data/cu_metal_rt.xdi');
const cuP1 = join(REPO, 'test/fixtures/structures/cu-p1.cif');
const WARNING = /scattering functions from the 'parametric' provider are approximate closed forms meant for tests/;

describe('results from the parametric provider are flagged as approximate', () => {
  it('fit: a warning line in the text and an entry in the JSON warnings', async () => {
    const text = await cli(['fit', cuData, cuP1, '--absorber', 'Cu', '--r', '1.5:3', '--provider', 'parametric']);
    expect(text.code, text.stderr).toBe(0);
    expect(text.stdout).toMatch(new RegExp(`warning: ${WARNING.source}`));
    const json = await cli(['fit', cuData, cuP1, '--absorber', 'Cu', '--r', '1.5:3', '--provider', 'parametric', '--json']);
    expect(json.code, json.stderr).toBe(0);
    const warnings: string[] = JSON.parse(json.stdout).warnings;
    expect(warnings.filter((w) => WARNING.test(w))).toHaveLength(1);
  });

  it('study run: the same warning', async () => {
    const run = await cli(['run', join(REPO, 'test/fixtures/studies/cu-foil-minimal.study.yaml'), '--provider', 'parametric']);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toMatch(new RegExp(`warning: ${WARNING.source}`));
  });

  it('ranking: a warning for the parametric provider only', () => {
    expect(rankingWarnings({ provider: 'parametric' })).toHaveLength(1);
    expect(rankingWarnings({ provider: 'parametric' })[0]).toMatch(WARNING);
    expect(defaultProviders({ cache: false }).get('firstPrinciples').approximate ?? false).toBe(false);
    expect(rankingWarnings({ provider: 'firstPrinciples' })).toEqual([]);
  });
});
