/**
 * Benchmark of the firstPrinciples scattering provider: one absorber (Cu, K edge) with three
 * scatterer species (O, Cu, Pt) on the full k grid 0..20 1/Å step 0.05, with a realistic environment.
 * "cold": a new provider and an empty cache folder (atoms solved, phase shifts computed, cache
 * written); "warm": a second new provider reading the same cache folder. Targets: cold
 * < 2 s on one core, warm < 20 ms.
 *
 * The calculation is single-threaded; to pin it to one core on Linux: taskset -c 0 npx tsx bench/scatter.ts.
 *
 * Run: npx tsx bench/scatter.ts [--out FILE.json]
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { firstPrinciplesProvider } from '../src/scatter/provider-first-principles';
import type { ScatteringRequest } from '../src/scatter/provider';

const args = process.argv.slice(2);
const outIndex = args.indexOf('--out');
const outFile = outIndex >= 0 ? args[outIndex + 1] : undefined;

const k = new Float64Array(401).map((_, i) => Number((i * 0.05).toFixed(2)));
const environment = {
  absorber: [
    { species: 'O', distance: 1.95, count: 4 },
    { species: 'Cu', distance: 2.9, count: 4 },
    { species: 'Pt', distance: 3.1, count: 4 },
  ],
  scatterers: {
    O: [{ species: 'Cu', distance: 1.95, count: 2 }, { species: 'Pt', distance: 2.0, count: 2 }],
    Cu: [{ species: 'O', distance: 1.95, count: 4 }, { species: 'Cu', distance: 2.9, count: 4 }],
    Pt: [{ species: 'O', distance: 2.0, count: 6 }, { species: 'Cu', distance: 3.1, count: 4 }],
  },
};
const requests: ScatteringRequest[] = [
  { absorber: 'Cu', scatterer: 'O', edge: 'K', distance: 1.95, k, environment },
  { absorber: 'Cu', scatterer: 'Cu', edge: 'K', distance: 2.9, k, environment },
  { absorber: 'Cu', scatterer: 'Pt', edge: 'K', distance: 3.1, k, environment },
];

const folder = mkdtempSync(join(tmpdir(), 'shellrank-bench-scatter-'));
try {
  const t0 = performance.now();
  const cold = firstPrinciplesProvider({ cacheDir: folder });
  for (const r of requests) cold.compute(r);
  const coldMs = performance.now() - t0;
  const warmRuns: number[] = [];
  for (let rep = 0; rep < 5; rep++) {
    const t1 = performance.now();
    const warm = firstPrinciplesProvider({ cacheDir: folder });
    for (const r of requests) warm.compute(r);
    warmRuns.push(performance.now() - t1);
  }
  warmRuns.sort((a, b) => a - b);
  const t2 = performance.now();
  const nocache = firstPrinciplesProvider({ cache: false });
  for (const r of requests) nocache.compute(r);
  const secondColdMs = performance.now() - t2;
  const result = {
    benchmark: 'scatter',
    absorber: 'Cu K',
    scatterers: ['O', 'Cu', 'Pt'],
    kPoints: k.length,
    coldMs: Math.round(coldMs),
    coldNoJitMs: Math.round(secondColdMs),
    warmMedianMs: Number(warmRuns[2].toFixed(2)),
    targets: { coldMs: 2000, warmMs: 20 },
    node: process.version,
  };
  const text = JSON.stringify(result, null, 2);
  console.log(text);
  if (outFile) writeFileSync(outFile, text + '\n');
} finally {
  rmSync(folder, { recursive: true, force: true });
}
