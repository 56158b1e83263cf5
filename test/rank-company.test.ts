/**
 * A candidate's record is a function of that candidate, the data and the settings only: the same
 * structure gives the same scores, fitted values and errors alone, among 30 others (crossing any
 * candidate count), under another file name, and on the calling thread or two worker threads;
 * the scattering tables it asks for do not depend on the candidates scored before it.
 * Candidates: the invented clusters of test/helpers/rank-synthetic.ts (one XYZ file each); the
 * parametric provider (approximate, for tests), since the property is about company, not physics.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import fc from 'fast-check';
import { copyFileSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { discoverCandidates } from '../src/rank/candidates';
import type { CandidateRecord } from '../src/rank/evaluate';
import { scoreCandidates } from '../src/rank/pool';
import { prepareRanking, type PreparedRanking } from '../src/rank/setup';
import { TableSource, type Environment } from '../src/rank/tables';
import type { ScatteringProvider, ScatteringRequest } from '../src/scatter/provider';
import { parametricProvider } from '../src/scatter/parametric';
import { clusterOf, familyMembers, FAMILY_PARENTS, syntheticChi, xyzFrame } from './helpers/rank-synthetic';

/** The record without the run's own bookkeeping (position, names, files, wall time). */
function physics(r: CandidateRecord): unknown {
  const { index: _i, name: _n, file: _f, files: _fs, components: _c, frame: _fr, key: _k, ms: _ms, settingsHash: _h, ...rest } = r;
  return rest;
}

describe('a candidate does not depend on its company or its file name', () => {
  let dir: string;
  let files: string[];
  let chi: ReturnType<typeof syntheticChi>;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-company-'));
    const structures = FAMILY_PARENTS.flatMap((f) => familyMembers(f.shells).map((m) => clusterOf(m.shells)));
    files = structures.map((s, i) => {
      const file = join(dir, `c${String(i).padStart(2, '0')}.xyz`);
      writeFileSync(file, xyzFrame(s, `candidate ${i}`));
      return file;
    });
    chi = syntheticChi(structures[12], 5, 0.001);
    return () => rmSync(dir, { recursive: true, force: true });
  });

  const prepare = (inputs: string[]): PreparedRanking => prepareRanking({ name: 'synthetic', file: null, sha256: null, chi }, discoverCandidates(inputs), { absorber: { index: 0 }, provider: 'parametric' }, { cwd: dir });

  async function recordsOf(inputs: string[], stage: 'prescreen' | 'refine', workers = 0, only?: string[]): Promise<Map<string, CandidateRecord>> {
    const p = prepare(inputs);
    const chosen = only ? p.candidates.filter((c) => only.includes(c.spec.kind === 'structure' ? c.spec.source.file : '')) : p.candidates;
    const out = new Map<string, CandidateRecord>();
    await scoreCandidates(p.job, chosen.map((candidate) => ({ candidate, stage })), { workers, onRecord: (r) => out.set(r.file, r) });
    return out;
  }

  it('gives one identical record alone, among 30 others, renamed, and with 0 or 2 workers', async () => {
    const target = files[7];
    const others = files.filter((f) => f !== target).slice(0, 30);
    // a copy under a name sorting before every other candidate
    const renamed = join(dir, 'aaa-first.xyz');
    copyFileSync(target, renamed);
    for (const stage of ['prescreen', 'refine'] as const) {
      const alone = (await recordsOf([target], stage)).get(target) as CandidateRecord;
      expect(alone.ok).toBe(true);
      const crowd = (await recordsOf([...others, target], stage, 0, [target])).get(target) as CandidateRecord;
      const crowdRenamed = (await recordsOf([renamed, ...others], stage, 0, [renamed])).get(renamed) as CandidateRecord;
      const threads = (await recordsOf([...others, target], stage, 2, [target])).get(target) as CandidateRecord;
      expect(physics(crowd)).toEqual(physics(alone));
      expect(physics(crowdRenamed)).toEqual(physics(alone));
      expect(physics(threads)).toEqual(physics(alone));
    }
  }, 240_000);

  it('property: over random small candidate sets, every candidate scores as it does alone', async () => {
    const alone = new Map<string, unknown>();
    const aloneOf = async (file: string) => {
      if (!alone.has(file)) alone.set(file, physics((await recordsOf([file], 'prescreen')).get(file) as CandidateRecord));
      return alone.get(file);
    };
    await fc.assert(fc.asyncProperty(
      // up to 25 candidates, so some sets cross any count threshold
      fc.integer({ min: 2, max: 25 }),
      fc.integer({ min: 0, max: 2 ** 31 - 1 }),
      fc.integer({ min: 0, max: 1 }),
      async (count, shift, probe) => {
        // `count` distinct files, picked with a random stride and offset
        const stride = [1, 3, 7, 9, 11, 13][shift % 6];
        const inputs = Array.from({ length: count }, (_, i) => files[(shift + i * stride) % files.length]);
        const target = inputs[probe];
        const record = (await recordsOf(inputs, 'prescreen', 0, [target])).get(target) as CandidateRecord;
        expect(physics(record)).toEqual(await aloneOf(target));
      },
    ), { numRuns: 12, seed: 17 });
  }, 240_000);

  it('asks the provider for the same tables whatever was scored before (shared tables too)', () => {
    const seen: ScatteringRequest[] = [];
    const recording: ScatteringProvider = { ...parametricProvider, compute: (req) => { seen.push(req); return parametricProvider.compute(req); } };
    const envA: Environment = { absorber: [{ species: 'O', distance: 2.003, count: 6 }], scatterers: { O: [{ species: 'Fe', distance: 2.003, count: 1 }] } };
    const envB: Environment = { absorber: [{ species: 'S', distance: 2.41, count: 4 }], scatterers: { O: [{ species: 'Fe', distance: 2.41, count: 1 }] } };
    for (const mode of ['own', 'shared'] as const) {
      const lookupA = (source: TableSource) => source.forCandidate('Fe', 'K', envA)('O', 2.003);
      seen.length = 0;
      lookupA(new TableSource(recording, { mode, distanceStep: mode === 'shared' ? 0.02 : 0 }, null, 15));
      const alone = seen.map((r) => ({ ...r, k: Array.from(r.k) }));
      seen.length = 0;
      const crowded = new TableSource(recording, { mode, distanceStep: mode === 'shared' ? 0.02 : 0 }, null, 15);
      crowded.forCandidate('Fe', 'K', envB)('O', 2.41);
      seen.length = 0;
      lookupA(crowded);
      expect(seen.map((r) => ({ ...r, k: Array.from(r.k) }))).toEqual(alone);
      expect(alone[0].environment).not.toEqual(envB);
    }
  });
});
