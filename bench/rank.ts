/**
 * Benchmark of ranking at scale: pre-screen and refinement throughput per core, the
 * speed-up of two worker threads over one, and the peak memory of a run over 100 and 10,000
 * candidates (flat in the count is the target, since results stream to disk).
 *
 * Candidates: frames of an invented 200-atom fcc Cu cluster (a = 3.6149 Å, from memory; a
 * sphere of the 200 atoms nearest a central site) with seeded Gaussian displacements of rms
 * 0.05 Å per coordinate, like snapshots of a room-temperature MD run; absorber: the central atom
 * (index 0); data: chi(k) simulated from frame 0 with seeded noise. The window (k 3-14 1/Å, R
 * 1.2-4.5 Å, margin 0.5 Å) puts every shell up to 5 Å in the model. Scattering: the
 * firstPrinciples provider with shared tables (the default for more than 20 candidates; tables are
 * computed in a warm-up pass first, so the timings measure the ranking, not the scattering
 * engine); --provider parametric measures with the closed-form provider instead.
 *
 * Prints one JSON object:
 *   {"prescreenPerCorePerSecond", "refinePerCorePerSecond", "twoCoreSpeedup",
 *    "peakMemoryMB": {"100": ..., "10000": ...}, "details": {...}}
 * Run: npx tsx bench/rank.ts [--provider firstPrinciples|parametric] [--out FILE.json]
 * (memory runs are child processes of this script: `--memory N` runs one of them).
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, rmSync, writeFileSync, openSync, writeSync, closeSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { seededRandom } from '../src/fit/random';
import { evaluateModel } from '../src/model/exafs';
import { tablesForPaths } from '../src/model/tables';
import { shellsOfStructure } from '../src/paths/index';
import { estimateNoise, DEFAULT_NOISE } from '../src/reduce/noise';
import { makeChi, type Chi } from '../src/reduce/index';
import { defaultProviders } from '../src/scatter/registry';
import { makeStructure, type Structure } from '../src/structure/structure';
import { discoverCandidates } from '../src/rank/candidates';
import { prepareRanking, type RankOptions } from '../src/rank/setup';
import { runRanking } from '../src/rank/run';

const args = process.argv.slice(2);
const option = (name: string) => {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : undefined;
};
const provider = option('--provider') ?? 'firstPrinciples';
const outFile = option('--out');
const SELF = fileURLToPath(import.meta.url);
const WORK = join(tmpdir(), `shellrank-bench-rank-${provider}`);

/** The 200 sites of fcc Cu nearest the origin (a sphere). */
function clusterSites(): [number, number, number][] {
  const a = 3.6149;
  const basis = [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
  const sites: [number, number, number][] = [];
  for (let i = -4; i <= 4; i++) for (let j = -4; j <= 4; j++) for (let k = -4; k <= 4; k++) {
    for (const b of basis) sites.push([(i + b[0]) * a, (j + b[1]) * a, (k + b[2]) * a]);
  }
  sites.sort((p, q) => Math.hypot(...p) - Math.hypot(...q));
  return sites.slice(0, 200);
}

/** Write `count` displaced frames as one XYZ file (frame 0 at index 0 of the file). */
function writeFrames(path: string, count: number): void {
  const sites = clusterSites();
  const random = seededRandom(2024);
  const fd = openSync(path, 'w');
  try {
    for (let f = 0; f < count; f++) {
      const lines = ['200', `frame ${f}`];
      for (const [x, y, z] of sites) {
        lines.push(`Cu ${(x + 0.05 * random.normal()).toFixed(5)} ${(y + 0.05 * random.normal()).toFixed(5)} ${(z + 0.05 * random.normal()).toFixed(5)}`);
      }
      writeSync(fd, lines.join('\n') + '\n');
    }
  } finally {
    closeSync(fd);
  }
}

function firstFrame(): Structure {
  const sites = clusterSites();
  const random = seededRandom(2024);
  const positions: number[] = [];
  for (const [x, y, z] of sites) positions.push(x + 0.05 * random.normal(), y + 0.05 * random.normal(), z + 0.05 * random.normal());
  return makeStructure({ species: sites.map(() => 'Cu'), positions });
}

function syntheticData(): Chi {
  const structure = firstFrame();
  const set = shellsOfStructure(structure, { absorber: { index: 0 }, radius: 5.5 });
  const p = defaultProviders({}).get(provider);
  const tables = tablesForPaths(set, set.paths, p, 17);
  const k = Float64Array.from({ length: 321 }, (_, i) => i * 0.05);
  const clean = evaluateModel(k, tables, { s0sq: 0.9, e0: 1, paths: set.paths.map((q) => ({ n: q.degeneracy, r: q.r, msrd: 0.008, c3: 0, c4: 0 })) }).chi;
  const random = seededRandom(7);
  const chi = Float64Array.from(clean, (v) => v + 0.001 * random.normal());
  return makeChi({ k, chi, e0: 8979, edgeStep: 1, noise: estimateNoise(k, chi, DEFAULT_NOISE) });
}

const OPTIONS: RankOptions = { absorber: { index: 0 }, provider, kRange: [3, 14], rRange: [1.2, 4.5], pathMargin: 0.5, tables: 'shared' };

interface Timing {
  /** Wall-clock seconds of the whole run (thread start-up included). */
  seconds: number;
  /** Steady-state rate of each stage: candidates per second between its first and last result. */
  rate: { prescreen: number; refine: number };
  computed: { prescreen: number; refine: number };
}

async function timeRun(file: string, refineTop: number, workers: number, tag: string, data: Chi): Promise<Timing> {
  const specs = discoverCandidates([file]);
  const prepared = prepareRanking({ name: 'bench', file: null, sha256: null, chi: data }, specs, OPTIONS, { cwd: WORK });
  const streamDir = join(WORK, `streams-${tag}`);
  rmSync(streamDir, { recursive: true, force: true });
  const marks: Record<string, { first: number; last: number; firstDone: number; lastDone: number }> = {};
  const t0 = performance.now();
  const out = await runRanking({
    job: prepared.job, candidates: prepared.candidates, streamDir, refineTop, shard: null, workers,
    onProgress: (e) => {
      if (e.done === e.resumed) return;
      const now = performance.now();
      const m = marks[e.stage] ?? (marks[e.stage] = { first: now, last: now, firstDone: e.done, lastDone: e.done });
      m.last = now;
      m.lastDone = e.done;
    },
  });
  const rate = (stage: string) => {
    const m = marks[stage];
    return m && m.last > m.first ? (m.lastDone - m.firstDone) / ((m.last - m.first) / 1000) : NaN;
  };
  return { seconds: (performance.now() - t0) / 1000, rate: { prescreen: rate('prescreen'), refine: rate('refine') }, computed: out.computed };
}

async function memoryRun(count: number): Promise<void> {
  const file = join(WORK, `frames-${count}.xyz`);
  if (!existsSync(file)) writeFrames(file, count);
  const data = syntheticData();
  await timeRun(file, 20, 2, `memory-${count}`, data);
  console.log(JSON.stringify({ count, maxRssMB: process.resourceUsage().maxRSS / 1024 }));
}

async function main(): Promise<void> {
  mkdirSync(WORK, { recursive: true });
  const data = syntheticData();
  const small = join(WORK, 'frames-1000.xyz');
  if (!existsSync(small)) writeFrames(small, 1000);
  // warm-up: fills the scattering cache for every rounded distance the frames need
  await timeRun(small, 0, 1, 'warm', data);
  const refineCount = 60;
  const one = await timeRun(small, refineCount, 1, 'one', data);
  const two = await timeRun(small, 0, 2, 'two', data);
  const memory: Record<string, number> = {};
  for (const count of [100, 10000]) {
    const r = spawnSync(process.execPath, ['--import', 'tsx', SELF, '--memory', String(count), '--provider', provider], { encoding: 'utf8', maxBuffer: 1 << 26 });
    if (r.status !== 0) throw new Error(`memory run ${count} failed: ${r.stderr}`);
    const line = r.stdout.trim().split('\n').pop() as string;
    memory[String(count)] = Math.round(JSON.parse(line).maxRssMB);
  }
  const result = {
    prescreenPerCorePerSecond: Number(one.rate.prescreen.toFixed(1)),
    refinePerCorePerSecond: Number(one.rate.refine.toFixed(2)),
    twoCoreSpeedup: Number((two.rate.prescreen / one.rate.prescreen).toFixed(2)),
    peakMemoryMB: memory,
    details: {
      provider, tables: 'shared', candidates: '200-atom fcc Cu clusters, rms displacement 0.05 Å', window: 'k 3-14, R 1.2-4.5, shells to 5 Å',
      prescreenCandidates: one.computed.prescreen, refineCandidates: one.computed.refine,
      prescreenTwoWorkersPerSecond: Number(two.rate.prescreen.toFixed(1)),
      wallSecondsOneThread: Number(one.seconds.toFixed(2)), wallSecondsTwoWorkersPrescreenOnly: Number(two.seconds.toFixed(2)),
      rates: 'steady state: results per second between the first and the last result of a stage (worker start-up, about 2-4 s for loading the sources, excluded; the wall times include it)',
      loadAverage: loadavg().map((x) => Number(x.toFixed(2))),
      memory: 'pre-screen of all candidates plus refinement of the best 20 on 2 worker threads; peak RSS of the whole process (all threads)',
    },
  };
  const text = JSON.stringify(result);
  console.log(text);
  if (outFile) writeFileSync(outFile, text + '\n');
}

const memoryCount = option('--memory');
if (memoryCount) await memoryRun(Number(memoryCount));
else await main();
