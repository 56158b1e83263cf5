/**
 * Benchmark: how long the command line takes to start. Runs, each in a fresh process,
 *   - `node -e 0` (bare Node, the floor),
 *   - `shellrank --version` (nothing but start-up),
 *   - `shellrank shells bench/startup-12-atoms.xyz --absorber Ni` (a small real command),
 * one unmeasured warm-up run each (fills the transpiler's disk cache), then `--runs` measured
 * runs (default 7), interleaved so that a burst of load on a shared machine hits every case alike.
 * Per case: median, minimum and maximum wall time, and median CPU time (user + system of the
 * child, from /proc/self/stat's cutime + cstime on Linux; null elsewhere); ratios to bare Node.
 * Targets: `--version` within 3x of bare Node, `shells` on the 12-atom file under 0.5 s wall.
 * Prints one JSON object (and writes it to --out FILE when given).
 * Run: npm run bench:startup [-- --runs 9 --out startup.json]
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { writeFileAtomic } from '../src/core/files';

const args = process.argv.slice(2);
const option = (name: string) => { const i = args.indexOf(name); return i >= 0 ? args[i + 1] : undefined; };
const runs = Math.max(1, Number(option('--runs') ?? 7));
const outFile = option('--out');

const bin = fileURLToPath(new URL('../bin/shellrank.js', import.meta.url));
const xyz = fileURLToPath(new URL('./startup-12-atoms.xyz', import.meta.url));
const CASES: { name: string; argv: string[] }[] = [
  { name: 'node -e 0', argv: ['-e', '0'] },
  { name: 'shellrank --version', argv: [bin, '--version'] },
  { name: 'shellrank shells (12 atoms)', argv: [bin, 'shells', xyz, '--absorber', 'Ni'] },
];

const ticksPerSecond = (() => {
  try { return Number(execFileSync('getconf', ['CLK_TCK'], { encoding: 'utf8' }).trim()) || 100; } catch { return 100; }
})();
/** CPU seconds of all waited-for children so far (Linux), or undefined. */
function childrenCpuSeconds(): number | undefined {
  try {
    const stat = readFileSync('/proc/self/stat', 'utf8');
    // fields after the parenthesised command name; cutime and cstime are fields 16 and 17
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(fields[13]) + Number(fields[14])) / ticksPerSecond;
  } catch {
    return undefined;
  }
}

function runOnce(argv: string[]): { wall: number; cpu?: number } {
  const cpu0 = childrenCpuSeconds();
  const t0 = process.hrtime.bigint();
  const r = spawnSync(process.execPath, argv, { encoding: 'utf8', env: { ...process.env, NODE_OPTIONS: '' } });
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  const cpu1 = childrenCpuSeconds();
  if (r.status !== 0) throw new Error(`startup: ${argv.join(' ')} exited with ${r.status}: ${r.stderr.split('\n')[0]}`);
  return { wall, cpu: cpu0 === undefined || cpu1 === undefined ? undefined : cpu1 - cpu0 };
}

const median = (xs: number[]) => { const s = [...xs].sort((a, b) => a - b); const m = s.length >> 1; return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2; };
const round = (x: number) => Math.round(x * 1000) / 1000;

for (const c of CASES) runOnce(c.argv);
const samples = CASES.map(() => ({ wall: [] as number[], cpu: [] as number[] }));
for (let i = 0; i < runs; i++) {
  CASES.forEach((c, j) => {
    const r = runOnce(c.argv);
    samples[j].wall.push(r.wall);
    if (r.cpu !== undefined) samples[j].cpu.push(r.cpu);
  });
}

const rows = CASES.map((c, j) => ({
  case: c.name,
  medianWallS: round(median(samples[j].wall)),
  minWallS: round(Math.min(...samples[j].wall)),
  maxWallS: round(Math.max(...samples[j].wall)),
  medianCpuS: samples[j].cpu.length ? round(median(samples[j].cpu)) : null,
}));
const ratio = (a: number | null, b: number | null) => (a === null || b === null || b === 0 ? null : Math.round((a / b) * 100) / 100);
const [bare, version, shells] = rows;
const result = {
  benchmark: 'startup',
  runs,
  node: process.version,
  cpuResolutionS: 1 / ticksPerSecond,
  rows,
  versionOverBareWall: ratio(version.medianWallS, bare.medianWallS),
  versionOverBareCpu: ratio(version.medianCpuS, bare.medianCpuS),
  shellsOverBareWall: ratio(shells.medianWallS, bare.medianWallS),
  targets: { versionOverBare: 3, shellsWallS: 0.5 },
};
const text = JSON.stringify(result, null, 1) + '\n';
if (outFile) writeFileAtomic(outFile, text);
process.stdout.write(text);
