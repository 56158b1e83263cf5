/**
 * Benchmark: reducing a 1,000-point scan to chi(k) (target under 100 ms).
 * The scan is the invented one of src/reduce/synthetic.ts (1,000 energies, k up to 16 1/Å,
 * noise 0.002). Times the whole reduceScan (E0, normalisation, interpolation onto the 0.05 1/Å
 * grid, background fit, noise estimate): the first (cold) call, then the median, minimum and
 * maximum of 50 calls after 5 warm-up calls. It also times reading and reducing the measured Cu
 * foil spectrum of test/data.
 * Prints one JSON object. Run: npx tsx bench/reduce.ts
 */
import { fileURLToPath } from 'node:url';
import { readScan } from '../src/read/spectrum/index';
import { reduceScan, syntheticScan } from '../src/reduce/index';

const scan = syntheticScan({ points: 1000, noise: 0.002, seed: 1 });
const t0 = performance.now();
reduceScan(scan);
const coldMs = performance.now() - t0;
for (let i = 0; i < 5; i++) reduceScan(scan);
const times: number[] = [];
for (let i = 0; i < 50; i++) {
  const t = performance.now();
  reduceScan(scan);
  times.push(performance.now() - t);
}
times.sort((a, b) => a - b);
const result: Record<string, unknown> = {
  benchmark: 'reduce',
  points: scan.energy.length,
  coldMs: round(coldMs),
  medianMs: round(times[times.length >> 1]),
  minMs: round(times[0]),
  maxMs: round(times[times.length - 1]),
  targetMs: 100,
  node: process.version,
};
const cu = fileURLToPath(new URL('../test/data/cu_metal_rt.xdi', import.meta.url));
const runs: number[] = [];
for (let i = 0; i < 20; i++) {
  const t = performance.now();
  reduceScan(readScan(cu));
  runs.push(performance.now() - t);
}
runs.sort((a, b) => a - b);
result.cuFoilReadAndReduceMedianMs = round(runs[runs.length >> 1]);
process.stdout.write(JSON.stringify(result) + '\n');

function round(x: number): number {
  return Math.round(x * 1000) / 1000;
}
