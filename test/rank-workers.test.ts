/**
 * Worker threads of the ranking (src/rank/pool.ts): the TypeScript worker loads through the tsx
 * bootstrap, scores exactly what the calling thread scores, hands results over in candidate
 * order whatever the finishing order, reports a broken worker set-up as an error, and stops on
 * an abort. Candidates: invented clusters (test/helpers/rank-synthetic.ts), parametric provider.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { discoverCandidates } from '../src/rank/candidates';
import type { CandidateRecord } from '../src/rank/evaluate';
import { RankInterrupted, scoreCandidates } from '../src/rank/pool';
import { prepareRanking, type PreparedRanking } from '../src/rank/setup';
import { syntheticChi, writeSyntheticCandidates } from './helpers/rank-synthetic';

describe('scoring candidates on worker threads', () => {
  let dir: string;
  let prepared: PreparedRanking;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-workers-'));
    const file = join(dir, 'candidates.xyz');
    const set = writeSyntheticCandidates(file);
    const chi = syntheticChi(set.frames[12].structure, 3, 0.001);
    prepared = prepareRanking({ name: 'synthetic', file: null, sha256: null, chi }, discoverCandidates([file]), { absorber: { index: 0 }, provider: 'parametric' }, { cwd: dir });
    return () => rmSync(dir, { recursive: true, force: true });
  });

  const tasksOf = (p: PreparedRanking, stage: 'prescreen' | 'refine', count = 50) => p.candidates.slice(0, count).map((candidate) => ({ candidate, stage }));
  const strip = (r: CandidateRecord) => ({ ...r, ms: 0 });

  it('gives the same records, in the same order, on two worker threads as on the calling thread', async () => {
    const here: CandidateRecord[] = [];
    await scoreCandidates(prepared.job, tasksOf(prepared, 'prescreen'), { workers: 0, onRecord: (r) => here.push(r) });
    const threads: CandidateRecord[] = [];
    // a reorder window of 1 forces strict hand-over in order while the threads race
    await scoreCandidates(prepared.job, tasksOf(prepared, 'prescreen'), { workers: 2, window: 1, onRecord: (r) => threads.push(r) });
    expect(threads.map((r) => r.index)).toEqual(Array.from({ length: 50 }, (_, i) => i));
    expect(threads.map(strip)).toEqual(here.map(strip));
    const refinedHere: CandidateRecord[] = [];
    const refinedThreads: CandidateRecord[] = [];
    await scoreCandidates(prepared.job, tasksOf(prepared, 'refine', 6), { workers: 0, onRecord: (r) => refinedHere.push(r) });
    await scoreCandidates(prepared.job, tasksOf(prepared, 'refine', 6), { workers: 2, onRecord: (r) => refinedThreads.push(r) });
    expect(refinedThreads.map(strip)).toEqual(refinedHere.map(strip));
    expect(refinedHere.every((r) => r.ok)).toBe(true);
  }, 120_000);

  it('reports a worker that cannot set up (unknown provider) as an error naming the cause', async () => {
    const broken = { ...prepared.job, settings: { ...prepared.job.settings, provider: 'noSuchProvider' } };
    await expect(scoreCandidates(broken, tasksOf(prepared, 'prescreen', 4), { workers: 2, onRecord: () => {} })).rejects.toThrow(/unknown scattering provider 'noSuchProvider'/);
  }, 60_000);

  it('stops on abort with RankInterrupted, keeping what was handed over', async () => {
    const controller = new AbortController();
    const seen: number[] = [];
    const run = scoreCandidates(prepared.job, tasksOf(prepared, 'prescreen'), {
      workers: 2, signal: controller.signal,
      onRecord: (r) => { seen.push(r.index); if (seen.length === 3) controller.abort(); },
    });
    await expect(run).rejects.toBeInstanceOf(RankInterrupted);
    expect(seen.slice(0, 3)).toEqual([0, 1, 2]);
    expect(seen.length).toBeLessThan(50);
  }, 60_000);
});
