/**
 * Exit codes of the ranking: the same error class with and without worker threads, and a
 * non-zero exit (with no "rank 1") when no candidate could be ranked. The codes are shellrank's
 * own contract (2 input, 3 computation, 70 internal; DEVELOPERS.md). Candidates are invented
 * clusters (test/helpers/rank-synthetic.ts), scattering from the parametric provider.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { InputError } from '../src/core/errors';
import { chiToJson } from '../src/reduce/index';
import { discoverCandidates } from '../src/rank/candidates';
import { scoreCandidates } from '../src/rank/pool';
import { prepareRanking } from '../src/rank/setup';
import { cli } from './helpers/cli';
import { clusterOf, syntheticChi, xyzFrame, type Shell } from './helpers/rank-synthetic';

const A: Shell[] = [{ species: 'O', n: 4, r: 1.95 }, { species: 'Fe', n: 8, r: 3.1 }];
const B: Shell[] = [{ species: 'O', n: 6, r: 2.12 }, { species: 'Fe', n: 4, r: 3.05 }];

describe('rank exit codes', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-exit-'));
    mkdirSync(join(dir, 'candidates'));
    writeFileSync(join(dir, 'candidates', 'a.xyz'), xyzFrame(clusterOf(A), 'A'));
    writeFileSync(join(dir, 'candidates', 'b.xyz'), xyzFrame(clusterOf(B), 'B'));
    writeFileSync(join(dir, 'a.json'), chiToJson(syntheticChi(clusterOf(A), 2, 0.001)));
    return () => rmSync(dir, { recursive: true, force: true });
  });

  it('an input error while setting up a worker is an InputError, as on the calling thread', async () => {
    const specs = discoverCandidates([join(dir, 'candidates')]);
    const prepared = prepareRanking({ name: 'a', file: null, sha256: null, chi: syntheticChi(clusterOf(A), 2, 0.001) }, specs, { absorber: { index: 0 }, provider: 'parametric' }, { cwd: dir });
    const broken = { ...prepared.job, settings: { ...prepared.job.settings, provider: 'noSuchProvider' } };
    const tasks = prepared.candidates.map((candidate) => ({ candidate, stage: 'prescreen' as const }));
    for (const workers of [0, 2]) {
      const error = await scoreCandidates(broken, tasks, { workers, onRecord: () => {} }).then(() => null, (e: unknown) => e);
      expect(error, `workers ${workers}`).toBeInstanceOf(InputError);
      expect((error as InputError).message).toMatch(/^--provider: unknown scattering provider 'noSuchProvider'/);
    }
  }, 60_000);

  it('an absorber that no candidate has: exit 2, no rank 1, no ranking written', async () => {
    for (const workers of ['0', '2']) {
      const out = `out-zz-${workers}`;
      const run = await cli(['rank', 'a.json', 'candidates', '--absorber', 'Zz', '--provider', 'parametric', '--workers', workers, '--out', out], dir);
      expect(run.code, `workers ${workers}`).toBe(2);
      expect(run.stderr).toMatch(/no candidate could be ranked/);
      expect(run.stdout).not.toMatch(/^\s*1\s/m);
      expect(existsSync(join(dir, out, 'ranking.json'))).toBe(false);
    }
  }, 120_000);
});
