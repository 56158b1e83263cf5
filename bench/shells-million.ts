/**
 * Benchmark: shells of one absorber in a 1,000,000-atom XYZ file (target under 10 s and
 * under 2 GB). Writes an fcc Cu supercell (63^3 cells x 4 atoms = 1,000,188 atoms, a = 3.6149 Å)
 * as XYZ into bench-output/, then times reading it and building the shells of one atom in the
 * middle, in a fresh child process so peak memory is that of the job alone.
 * Prints one JSON object: {"atoms", "fileMB", "readMs", "shellsMs", "totalMs", "peakRssMB"}.
 * Run: npm run bench:shells
 */
import { spawnSync } from 'node:child_process';
import { createWriteStream, existsSync, mkdirSync, statSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';

const OUT = fileURLToPath(new URL('../bench-output/', import.meta.url));
const FILE = join(OUT, 'cu-million.xyz');
const CELLS = 63;
const A = 3.6149;

async function writeSupercell(): Promise<void> {
  mkdirSync(OUT, { recursive: true });
  const stream = createWriteStream(FILE);
  const basis = [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
  stream.write(`${CELLS ** 3 * 4}\nfcc Cu supercell for the shells benchmark\n`);
  let chunk = '';
  for (let i = 0; i < CELLS; i++) {
    for (let j = 0; j < CELLS; j++) {
      for (let k = 0; k < CELLS; k++) {
        for (const b of basis) {
          chunk += `Cu ${((i + b[0]) * A).toFixed(5)} ${((j + b[1]) * A).toFixed(5)} ${((k + b[2]) * A).toFixed(5)}\n`;
        }
      }
      if (chunk.length > 1 << 20) {
        if (!stream.write(chunk)) await new Promise<void>((r) => stream.once('drain', () => r()));
        chunk = '';
      }
    }
  }
  stream.write(chunk);
  await new Promise<void>((r) => stream.end(r));
}

const child = `
import { loadStructureFile } from '../src/read/load-structure';
import { shellsOfStructure } from '../src/paths/index';
const t0 = performance.now();
const loaded = loadStructureFile(${JSON.stringify(FILE)});
const t1 = performance.now();
const s = loaded.frames[0];
// the atom nearest the centre of the block
const c = ${((CELLS * A) / 2).toFixed(4)};
let best = 0, bd = Infinity;
for (let i = 0; i < s.species.length; i++) {
  const d = (s.positions[3*i]-c)**2 + (s.positions[3*i+1]-c)**2 + (s.positions[3*i+2]-c)**2;
  if (d < bd) { bd = d; best = i; }
}
const set = shellsOfStructure(s, { absorber: { index: best }, radius: 6 });
const t2 = performance.now();
process.stdout.write(JSON.stringify({ peakKb: process.resourceUsage().maxRSS, atoms: s.species.length, readMs: t1 - t0, shellsMs: t2 - t1, totalMs: t2 - t0, shells: set.paths.length, first: set.paths[0] }));
`;

async function main(): Promise<void> {
  if (!existsSync(FILE)) await writeSupercell();
  const script = join(fileURLToPath(new URL('.', import.meta.url)), '.shells-million-child.ts');
  const { writeFileSync, unlinkSync } = await import('node:fs');
  writeFileSync(script, child);
  try {
    const r = spawnSync(process.execPath, ['--import', 'tsx', script], { encoding: 'utf8', maxBuffer: 1 << 26 });
    if (r.status !== 0) throw new Error(r.stderr);
    const result = JSON.parse(r.stdout);
    const peakKb = result.peakKb;
    console.log(JSON.stringify({
      atoms: result.atoms,
      fileMB: +(statSync(FILE).size / 1e6).toFixed(1),
      readMs: Math.round(result.readMs),
      shellsMs: Math.round(result.shellsMs),
      totalMs: Math.round(result.totalMs),
      peakRssMB: Math.round(peakKb / 1024),
      shells: result.shells,
      firstShell: { n: result.first.degeneracy, r: result.first.r },
    }));
  } finally {
    unlinkSync(script);
  }
}

await main();
