/**
 * One writer per output folder, and resuming that always recovers: a second run into a folder a
 * live run holds is refused naming the holder's process and host; a lock left by a process that
 * has ended is taken over; a stream file with repeated records, a line cut short in the middle
 * (two writers, one killed) or a record of other settings is repaired on resume, keeping the
 * first record of each candidate. Candidates: invented clusters (test/helpers/rank-synthetic.ts),
 * parametric provider (approximate, for bookkeeping tests).
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { join } from 'node:path';
import { InputError } from '../src/core/errors';
import { discoverCandidates } from '../src/rank/candidates';
import { runRanking } from '../src/rank/run';
import { prepareRanking, type PreparedRanking } from '../src/rank/setup';
import { forEachRecord, writerLock } from '../src/rank/stream';
import { clusterOf, FAMILY_PARENTS, syntheticChi, xyzFrame } from './helpers/rank-synthetic';

describe('one writer per folder, and resume that recovers', () => {
  let dir: string;
  let prepared: PreparedRanking;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-lock-'));
    const structures = FAMILY_PARENTS.map((f) => clusterOf(f.shells));
    const file = join(dir, 'candidates.xyz');
    writeFileSync(file, structures.map((s, i) => xyzFrame(s, `candidate ${i}`)).join(''));
    prepared = prepareRanking({ name: 'synthetic', file: null, sha256: null, chi: syntheticChi(structures[3], 9, 0.001) }, discoverCandidates([file]), { absorber: { index: 0 }, provider: 'parametric' }, { cwd: dir });
    return () => rmSync(dir, { recursive: true, force: true });
  });

  const run = (out: string) => runRanking({ job: prepared.job, candidates: prepared.candidates, streamDir: out, refineTop: 3, shard: null, workers: 0 });

  it('refuses a second writer while the first holds the folder, naming its pid and host', async () => {
    const out = join(dir, 'busy');
    const first = run(out);
    await expect(run(out)).rejects.toThrow(new RegExp(`being written by process ${process.pid} on this host`));
    await first;
    expect(existsSync(join(out, 'shellrank.lock'))).toBe(false);
    const again = await run(out);
    expect(again.resumed.prescreen).toBe(prepared.candidates.length);
  }, 60_000);

  it('takes over the lock of a process that has ended, refuses one from another host', () => {
    const out = join(dir, 'stale');
    const ended = spawnSync(process.execPath, ['-e', '0']);
    expect(ended.status).toBe(0);
    const lockFile = join(out, 'shellrank.lock');
    writerLock(out).release();
    writeFileSync(lockFile, JSON.stringify({ pid: ended.pid, host: hostname(), started: '2026-01-01T00:00:00Z' }));
    const lock = writerLock(out);
    expect(JSON.parse(readFileSync(lockFile, 'utf8')).pid).toBe(process.pid);
    lock.release();
    writeFileSync(lockFile, JSON.stringify({ pid: 1, host: 'another-host.invalid', started: '2026-01-01T00:00:00Z' }));
    expect(() => writerLock(out)).toThrow(InputError);
    expect(() => writerLock(out)).toThrow(/process 1 on host another-host.invalid/);
  });

  it('repairs a stream with repeated records, a cut line in the middle and a foreign record', async () => {
    const out = join(dir, 'damaged');
    await run(out);
    const stream = join(out, readdirSync(out).find((n) => n.endsWith('.prescreen.jsonl')) as string);
    const lines = readFileSync(stream, 'utf8').split('\n').filter((l) => l !== '');
    const foreign = JSON.stringify({ ...JSON.parse(lines[2]), settingsHash: 'ffffffffffffffff' });
    // header, 3 records, a cut copy of record 4, record 2 again, a foreign record, the rest, a cut tail
    const damaged = [lines[0], lines[1], lines[2], lines[3], lines[4].slice(0, 40), lines[2], foreign, ...lines.slice(4), lines[5].slice(0, 25)];
    writeFileSync(stream, damaged.join('\n'));
    const resumed = await run(out);
    expect(resumed.computed.prescreen).toBe(0);
    const keys: string[] = [];
    forEachRecord(stream, (r) => keys.push(r.key));
    expect(keys).toEqual(lines.slice(1).map((l) => JSON.parse(l).key));
    expect(readFileSync(stream, 'utf8')).toBe(lines.join('\n') + '\n');
  }, 60_000);
});
