/**
 * Resuming after an interruption: killing a running ranking (SIGKILL, so no
 * clean-up code runs) and starting it again must skip every candidate already in the stream
 * file, compute only the rest, and give the same final table as an uninterrupted run. Also:
 * sharded runs merged with `shellrank merge` give the same table as one run.
 *
 * Candidates: 600 invented clusters (test/helpers/rank-synthetic.ts) scored with the parametric
 * provider (approximate; fine for testing bookkeeping). Runs go through the real binary.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chiToJson } from '../src/reduce/index';
import { REPO, cliProcess } from './helpers/cli';
import { clusterOf, syntheticChi, xyzFrame } from './helpers/rank-synthetic';

const COUNT = 600;

function countRecords(path: string): number {
  if (!existsSync(path)) return 0;
  const lines = readFileSync(path, 'utf8').split('\n');
  return lines.filter((l, i) => i > 0 && l.endsWith('}')).length;
}

function streamIn(dir: string, stage: string): string | null {
  if (!existsSync(dir)) return null;
  const f = readdirSync(dir).find((n) => n.endsWith(`.${stage}.jsonl`));
  return f ? join(dir, f) : null;
}

describe('an interrupted ranking resumes without redoing finished candidates', () => {
  let dir: string;
  let args: (out: string) => string[];
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-resume-'));
    const frames: string[] = [];
    for (let i = 0; i < COUNT; i++) {
      const s = 1 + 0.0004 * (i - COUNT / 2);
      frames.push(xyzFrame(clusterOf([{ species: 'O', n: 4 + (i % 3), r: 2.0 * s }, { species: 'Fe', n: 12, r: 3.0 * s }, { species: 'O', n: 8, r: 3.55 }]), `frame ${i}`));
    }
    writeFileSync(join(dir, 'frames.xyz'), frames.join(''));
    writeFileSync(join(dir, 'data.json'), chiToJson(syntheticChi(clusterOf([{ species: 'O', n: 5, r: 2.01 }, { species: 'Fe', n: 12, r: 3.0 }, { species: 'O', n: 8, r: 3.55 }]), 7, 0.001)));
    args = (out) => ['rank', 'data.json', 'frames.xyz', '--absorber', '#0', '--provider', 'parametric', '--refine-top', '5', '--workers', '1', '--quiet', '--out', out];
    return () => rmSync(dir, { recursive: true, force: true });
  });

  it('gives the same table after SIGKILL and a restart, computing only the unfinished candidates', async () => {
    const whole = cliProcess(args('whole'), dir);
    // nothing on stderr but the warning that the parametric provider is approximate
    expect(whole.stderr.replace(/^warning: scattering functions from the 'parametric' provider are approximate.*\n/m, '')).toBe('');
    expect(whole.code).toBe(0);

    // start, wait until some candidates are in the stream, kill without warning
    const child = spawn(process.execPath, [`${REPO}bin/shellrank.js`, ...args('resumed')], { cwd: dir, stdio: 'ignore' });
    const outDir = join(dir, 'resumed');
    let before = 0;
    await new Promise<void>((resolve, reject) => {
      const started = Date.now();
      const poll = setInterval(() => {
        const f = streamIn(outDir, 'prescreen');
        before = f ? countRecords(f) : 0;
        if (before >= 50) {
          clearInterval(poll);
          child.kill('SIGKILL');
          resolve();
        } else if (Date.now() - started > 60_000) {
          clearInterval(poll);
          child.kill('SIGKILL');
          reject(new Error('the run did not start writing results within 60 s'));
        }
      }, 20);
    });
    await new Promise((resolve) => child.on('exit', resolve));
    const stream = streamIn(outDir, 'prescreen') as string;
    const killedAt = countRecords(stream);
    expect(killedAt).toBeGreaterThanOrEqual(50);
    expect(killedAt).toBeLessThan(COUNT);
    const finishedLines = readFileSync(stream, 'utf8').split('\n').slice(0, killedAt + 1);
    expect(existsSync(join(outDir, 'ranking.csv'))).toBe(false);

    const again = cliProcess(args('resumed').filter((a) => a !== '--quiet'), dir);
    expect(again.code).toBe(0);
    // it says how many it found done, and that is every one finished before the kill
    const m = /resumed: (\d+) pre-screened and (\d+) refined/.exec(again.stderr);
    expect(m).not.toBeNull();
    expect(Number(m![1])).toBe(killedAt);
    // the finished records were kept byte for byte, none written twice
    const lines = readFileSync(stream, 'utf8').split('\n').filter((l) => l !== '');
    expect(lines.slice(0, killedAt + 1)).toEqual(finishedLines);
    const keys = lines.slice(1).map((l) => JSON.parse(l).key);
    expect(keys).toHaveLength(COUNT);
    expect(new Set(keys).size).toBe(COUNT);
    // same final table as the uninterrupted run
    expect(readFileSync(join(outDir, 'ranking.csv'), 'utf8')).toBe(readFileSync(join(dir, 'whole', 'ranking.csv'), 'utf8'));
    const a = JSON.parse(readFileSync(join(outDir, 'ranking.json'), 'utf8')).candidates;
    const b = JSON.parse(readFileSync(join(dir, 'whole', 'ranking.json'), 'utf8')).candidates;
    expect(a).toEqual(b);
  }, 240_000);

  it('merges three shards into the table of the single run', () => {
    for (let i = 1; i <= 3; i++) {
      const shard = cliProcess([...args('shards'), '--shard', `${i}/3`], dir);
      expect(shard.code).toBe(0);
      expect(shard.stdout).toContain(`shard ${i}/3`);
    }
    // an incomplete set is refused, naming the missing shard
    const partial = cliProcess(['merge', join('shards', readdirSync(join(dir, 'shards')).find((n) => n.includes('shard-1-of-3.prescreen')) as string)], dir);
    expect(partial.code).toBe(2);
    expect(partial.stderr).toContain('shard 2 of 3 is missing');
    const merged = cliProcess(['merge', 'shards', '--out', 'merged'], dir);
    expect(merged.code).toBe(0);
    expect(readFileSync(join(dir, 'merged', 'ranking.csv'), 'utf8')).toBe(readFileSync(join(dir, 'whole', 'ranking.csv'), 'utf8'));
  }, 240_000);
});
