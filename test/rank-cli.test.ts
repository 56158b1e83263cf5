/**
 * The `rank` and `merge` commands: the JSON document of the issue, the tables, ensembles and
 * mixtures, and errors that name what is wrong. Structures and data are invented for the tests;
 * scattering from the parametric provider (approximate).
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chiToJson, makeChi } from '../src/reduce/index';
import { estimateNoise, DEFAULT_NOISE } from '../src/reduce/noise';
import { evaluateModel } from '../src/model/exafs';
import { tablesForPaths } from '../src/model/tables';
import { shellsOfStructure } from '../src/paths/index';
import { parametricProvider } from '../src/scatter/parametric';
import { seededRandom } from '../src/fit/random';
import { shellsOfEnsemble, type FrameRef } from '../src/rank/candidates';
import { cli } from './helpers/cli';
import { clusterOf, simulationMsrd, syntheticChi, xyzFrame, type Shell } from './helpers/rank-synthetic';

const A: Shell[] = [{ species: 'O', n: 4, r: 1.95 }, { species: 'Fe', n: 8, r: 3.1 }];
// B is not A scaled: other ratios of coordination numbers and of distances
const B: Shell[] = [{ species: 'O', n: 6, r: 2.12 }, { species: 'Fe', n: 4, r: 3.05 }];

/** chi(k) of fraction f of A plus 1 - f of B (s0sq 0.9, e0 2 eV), seeded noise rms 0.0005. */
function mixtureChi(f: number) {
  const k = Float64Array.from({ length: 321 }, (_, i) => i * 0.05);
  const total = new Float64Array(k.length);
  for (const [shells, w] of [[A, f], [B, 1 - f]] as const) {
    const set = shellsOfStructure(clusterOf(shells), { absorber: { index: 0 }, radius: 4.6 });
    const tables = tablesForPaths(set, set.paths, parametricProvider, 17);
    const chi = evaluateModel(k, tables, { s0sq: 0.9, e0: 2, paths: set.paths.map((p) => ({ n: p.degeneracy * w, r: p.r, msrd: simulationMsrd(p.r), c3: 0, c4: 0 })) }).chi;
    chi.forEach((v, i) => { total[i] += v; });
  }
  const random = seededRandom(5);
  const noisy = Float64Array.from(total, (v) => v + 0.0005 * random.normal());
  return makeChi({ k, chi: noisy, e0: 7112, edgeStep: 1, noise: estimateNoise(k, noisy, DEFAULT_NOISE) });
}

describe('shellrank rank', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-rank-cli-'));
    mkdirSync(join(dir, 'candidates'));
    writeFileSync(join(dir, 'candidates', 'a.xyz'), xyzFrame(clusterOf(A), 'A'));
    writeFileSync(join(dir, 'candidates', 'b.xyz'), xyzFrame(clusterOf(B), 'B'));
    writeFileSync(join(dir, 'candidates', 'notes.txt'), 'not a structure');
    writeFileSync(join(dir, 'a-only.json'), chiToJson(syntheticChi(clusterOf(A), 2, 0.001)));
    writeFileSync(join(dir, 'mixed.json'), chiToJson(mixtureChi(0.3)));
    return () => rmSync(dir, { recursive: true, force: true });
  });

  it('writes the JSON document of the issue: candidates with name, file, rank, verdict, stats, fit; settings; provenance', async () => {
    const run = await cli(['rank', 'a-only.json', 'candidates', '--absorber', '#0', '--provider', 'parametric', '--workers', '0', '--json', '--out', 'out-a'], dir);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(Object.keys(doc)).toEqual(['candidates', 'warnings', 'settings', 'provenance']);
    // the parametric provider is approximate: the ranking says so
    expect(doc.warnings).toHaveLength(1);
    expect(doc.candidates.map((c: { name: string }) => c.name)).toEqual(['candidates/a.xyz', 'candidates/b.xyz']);
    const [best, other] = doc.candidates;
    expect(best).toMatchObject({ file: 'candidates/a.xyz', rank: 1, verdict: 'best', stage: 'refine' });
    expect(other.rank).toBe(2);
    expect(['worse at 95 %', 'rejected']).toContain(other.verdict);
    expect(other.test.method).toBe('variance-ratio');
    expect(other.test.pValue).toBeLessThan(0.05);
    for (const key of ['rFactor', 'chiSquare', 'reducedChiSquare', 'nIndependent', 'nVaried', 'aic', 'bic']) expect(typeof best.stats[key]).toBe('number');
    expect(Object.keys(best.fit)).toEqual(expect.arrayContaining(['status', 'stats', 'params', 'shells', 'recipe', 'curves']));
    expect(best.fit.recipe.join(' ')).toMatch(/free parameters for .* independent points/);
    // each refined record carries its plausibility warnings (src/fit/exafs/plausibility.ts), their messages also in its warnings
    for (const c of doc.candidates.filter((x: { stage: string }) => x.stage === 'refine')) {
      expect(Array.isArray(c.fit.plausibility)).toBe(true);
      for (const w of c.fit.plausibility.filter((x: { code: string }) => x.code !== 'at-bound' && x.code !== 'not-converged')) expect(c.fit.warnings).toContain(w.message);
    }
    // N_ind = 2 Dk DR / pi + 2 for k 3-14, R 1.2-3.6 (Stern, Phys. Rev. B 48, 9825 (1993))
    // (the JSON keeps 10 significant digits)
    expect(best.stats.nIndependent).toBeCloseTo((2 * 11 * 2.4) / Math.PI + 2, 7);
    expect(doc.settings.settingsHash).toMatch(/^[0-9a-f]{16}$/);
    expect(doc.provenance.tool).toBe('shellrank');
  }, 120_000);

  it('prints Markdown and CSV tables with one row per candidate', async () => {
    const md = await cli(['rank', 'a-only.json', 'candidates', '--absorber', '#0', '--provider', 'parametric', '--workers', '0', '--markdown', '--out', 'out-a'], dir);
    expect(md.code).toBe(0);
    const lines = md.stdout.trim().split('\n');
    expect(lines[0]).toBe('| rank | candidate | verdict | p | test | R-factor | reduced chi2 | AIC | BIC | varied | N_ind | stage |');
    expect(lines).toHaveLength(4);
    // the second run found everything done in the same --out folder
    expect(md.stderr).toContain('resumed: 2 pre-screened and 2 refined');
  }, 120_000);

  it('fits the fraction of a two-candidate mixture (0.3 put in; within 0.05) and prefers it to either part (Hamilton test)', async () => {
    const run = await cli(['rank', 'mixed.json', 'candidates/a.xyz', 'candidates/b.xyz', '--absorber', '#0', '--provider', 'parametric', '--workers', '0',
      '--mixture', 'candidates/a.xyz,candidates/b.xyz', '--json', '--out', 'out-mixture'], dir);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    const [best, ...rest] = doc.candidates;
    expect(best.name).toBe('mixture of candidates/a.xyz and candidates/b.xyz');
    expect(best.fit.params.fraction.value).toBeGreaterThan(0.25);
    expect(best.fit.params.fraction.value).toBeLessThan(0.35);
    for (const part of rest) {
      expect(part.test.method).toBe('hamilton');
      expect(part.test.pValue).toBeLessThan(0.05);
    }
  }, 120_000);

  it('averages the frames of a multi-frame file into one candidate with --ensemble', async () => {
    writeFileSync(join(dir, 'two-frames.xyz'), xyzFrame(clusterOf([{ species: 'O', n: 4, r: 1.9 }]), 'f0') + xyzFrame(clusterOf([{ species: 'O', n: 4, r: 2.1 }]), 'f1'));
    const run = await cli(['rank', 'a-only.json', 'two-frames.xyz', '--absorber', '#0', '--provider', 'parametric', '--workers', '0', '--ensemble', '--csv', '--out', 'out-ensemble'], dir);
    expect(run.code).toBe(0);
    expect(run.stdout).toContain('two-frames.xyz (2 frames averaged)');
    // configurational average (src/paths/pathset.ts): each frame's site weight 1, so n = 4/2 at each distance
    const ref = (frame: number): FrameRef => ({ file: 'two-frames.xyz', sha256: 'x', frame });
    const set = shellsOfEnsemble([{ structure: clusterOf([{ species: 'O', n: 4, r: 1.9 }]), ref: ref(0) }, { structure: clusterOf([{ species: 'O', n: 4, r: 2.1 }]), ref: ref(1) }],
      { absorber: { index: 0 }, edge: 'K', radius: 3, tolerance: 0.01 });
    expect(set.pathSet.paths.map((p) => [p.scatterer, Number(p.r.toFixed(6)), p.degeneracy])).toEqual([['O', 1.9, 2], ['O', 2.1, 2]]);
  }, 120_000);

  it('names the problem: a missing candidate, a folder without structures, a bad shard', async () => {
    const missing = await cli(['rank', 'a-only.json', 'nowhere.xyz', '--absorber', '#0', '--provider', 'parametric'], dir);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toContain('nowhere.xyz: no such file or folder');
    mkdirSync(join(dir, 'empty'), { recursive: true });
    const empty = await cli(['rank', 'a-only.json', 'empty', '--absorber', '#0', '--provider', 'parametric'], dir);
    expect(empty.code).toBe(2);
    expect(empty.stderr).toContain('the folder holds no structure files');
    const shard = await cli(['rank', 'a-only.json', 'candidates', '--absorber', '#0', '--provider', 'parametric', '--shard', '4/3'], dir);
    expect(shard.code).toBe(2);
    expect(shard.stderr).toContain('--shard');
  }, 60_000);

  it('merge refuses a file that is not a stream and streams of different settings', async () => {
    const notStream = await cli(['merge', 'a-only.json'], dir);
    expect(notStream.code).toBe(2);
    expect(notStream.stderr).toContain('is not a stream file');
    const r1 = await cli(['rank', 'a-only.json', 'candidates', '--absorber', '#0', '--provider', 'parametric', '--workers', '0', '--out', 'two-settings', '--quiet'], dir);
    const r2 = await cli(['rank', 'a-only.json', 'candidates', '--absorber', '#0', '--provider', 'parametric', '--workers', '0', '--out', 'two-settings', '--r', '1.2:3.4', '--quiet'], dir);
    expect(r1.code + r2.code).toBe(0);
    const mixed = await cli(['merge', 'two-settings'], dir);
    expect(mixed.code).toBe(2);
    expect(mixed.stderr).toContain('2 different runs');
  }, 120_000);
});
