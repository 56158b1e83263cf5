/**
 * Benchmark of the self-consistent LDA atom (src/scatter/atom): wall time per solve for the
 * atoms a scattering calculation needs (absorber with core hole, a few scatterers).
 *
 * Run: npx tsx bench/atom.ts [--out FILE.json] [--repeats N]
 * Prints one JSON object; with --out also writes it to FILE.json. "cold" is the first solve of
 * the process (includes JIT warm-up, as a one-shot CLI run would see it); "warm" is the median
 * of the following repeats.
 */
import { writeFileSync } from 'node:fs';
import { solveAtom, type AtomOptions } from '../src/scatter/atom/index';

const args = process.argv.slice(2);
const outIndex = args.indexOf('--out');
const outFile = outIndex >= 0 ? args[outIndex + 1] : undefined;
const repeatsIndex = args.indexOf('--repeats');
const repeats = repeatsIndex >= 0 ? Number(args[repeatsIndex + 1]) : 15;

const cases: Array<{ name: string; options: AtomOptions }> = [
  { name: 'Cu', options: { z: 29 } },
  { name: 'Cu non-relativistic', options: { z: 29, relativistic: false } },
  { name: 'Cu K core hole', options: { z: 29, coreHole: 'K' } },
  { name: 'Fe', options: { z: 26 } },
  { name: 'O', options: { z: 8 } },
  { name: 'Pt', options: { z: 78 } },
  { name: 'Pt L3 core hole', options: { z: 78, coreHole: 'L3' } },
  { name: 'U', options: { z: 92 } },
];

function time(options: AtomOptions): { ms: number; iterations: number; points: number } {
  const start = performance.now();
  const atom = solveAtom(options);
  return { ms: performance.now() - start, iterations: atom.iterations, points: atom.r.length };
}

const results: Record<string, unknown>[] = [];
for (const { name, options } of cases) {
  const cold = time(options);
  const warm: number[] = [];
  for (let k = 0; k < repeats; k++) warm.push(time(options).ms);
  warm.sort((a, b) => a - b);
  results.push({
    name,
    options,
    coldMs: Number(cold.ms.toFixed(2)),
    warmMedianMs: Number(warm[Math.floor(warm.length / 2)].toFixed(2)),
    warmMinMs: Number(warm[0].toFixed(2)),
    iterations: cold.iterations,
    gridPoints: cold.points,
  });
}

const report = {
  benchmark: 'scatter/atom solveAtom',
  node: process.version,
  repeats,
  note: 'coldMs of the first case includes JIT warm-up of the whole solver',
  results,
};
const text = JSON.stringify(report, null, 2);
if (outFile) writeFileSync(outFile, text + '\n');
process.stdout.write(text + '\n');
