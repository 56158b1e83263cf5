/**
 * Synthetic candidates for the ranking tests: absorber-centred clusters written as one
 * multi-frame XYZ file, and a noisy chi(k) simulated from one of them with the parametric
 * provider (approximate, for tests only). The structures are invented for the tests.
 *
 * Base: an absorber (Fe, index 0 of every frame) with shell A = 6 O at 2.00 Å, shell B = 12 Fe at
 * 3.00 Å, shell C = 8 O at 3.55 Å. Ten families differ from it by changes far above the
 * resolution pi / (2 Dk) = 0.143 Å of k 3-14 (a neighbour removed, a shell moved by 0.08-0.12 Å, a
 * species changed, a shell split by 0.2 Å...). Each family has five members: its parent and four
 * variants that differ from it only below the resolution (a shell split by 0.06-0.10 Å around its
 * mean, or shifted by 0.004 Å).
 */
import { writeFileSync } from 'node:fs';
import { evaluateModel } from '../../src/model/exafs';
import { tablesForPaths } from '../../src/model/tables';
import { shellsOfStructure } from '../../src/paths/index';
import { estimateNoise, DEFAULT_NOISE } from '../../src/reduce/noise';
import { makeChi, type Chi } from '../../src/reduce/index';
import { parametricProvider } from '../../src/scatter/parametric';
import { seededRandom } from '../../src/fit/random';
import { makeStructure, type Structure } from '../../src/structure/structure';

export interface Shell { species: string; n: number; r: number }

/** n directions spread over the sphere (Fibonacci lattice; common practice, no source). */
function directions(n: number, offset: number): [number, number, number][] {
  const out: [number, number, number][] = [];
  const golden = Math.PI * (3 - Math.sqrt(5));
  for (let i = 0; i < n; i++) {
    const y = 1 - ((i + 0.5) / n) * 2;
    const radius = Math.sqrt(1 - y * y);
    const phi = i * golden + offset;
    out.push([Math.cos(phi) * radius, y, Math.sin(phi) * radius]);
  }
  return out;
}

/** A cluster with the absorber at the origin and the given shells. */
export function clusterOf(shells: readonly Shell[], absorber = 'Fe'): Structure {
  const species = [absorber];
  const positions = [0, 0, 0];
  shells.forEach((s, si) => {
    for (const [x, y, z] of directions(s.n, 0.37 * si)) {
      species.push(s.species);
      positions.push(x * s.r, y * s.r, z * s.r);
    }
  });
  return makeStructure({ species, positions });
}

export function xyzFrame(structure: Structure, title: string): string {
  const lines = [String(structure.species.length), title];
  for (let i = 0; i < structure.species.length; i++) {
    const p = structure.positions;
    lines.push(`${structure.species[i]} ${p[3 * i].toFixed(6)} ${p[3 * i + 1].toFixed(6)} ${p[3 * i + 2].toFixed(6)}`);
  }
  return lines.join('\n') + '\n';
}

const BASE: Shell[] = [{ species: 'O', n: 6, r: 2.0 }, { species: 'Fe', n: 12, r: 3.0 }, { species: 'O', n: 8, r: 3.55 }];

/** The ten family parents (changes far above the resolution). */
export const FAMILY_PARENTS: { label: string; shells: Shell[] }[] = [
  { label: 'base', shells: BASE },
  { label: 'A: 5 O', shells: [{ species: 'O', n: 5, r: 2.0 }, BASE[1], BASE[2]] },
  { label: 'A at 1.92', shells: [{ species: 'O', n: 6, r: 1.92 }, BASE[1], BASE[2]] },
  { label: 'B at 3.12', shells: [BASE[0], { species: 'Fe', n: 12, r: 3.12 }, BASE[2]] },
  { label: 'A: S', shells: [{ species: 'S', n: 6, r: 2.0 }, BASE[1], BASE[2]] },
  { label: 'B: 8 Fe', shells: [BASE[0], { species: 'Fe', n: 8, r: 3.0 }, BASE[2]] },
  { label: 'no C', shells: [BASE[0], BASE[1]] },
  { label: 'A split 0.2', shells: [{ species: 'O', n: 3, r: 1.9 }, { species: 'O', n: 3, r: 2.1 }, BASE[1], BASE[2]] },
  { label: 'B: Cu', shells: [BASE[0], { species: 'Cu', n: 12, r: 3.0 }, BASE[2]] },
  { label: 'A: 4 O, B at 2.92', shells: [{ species: 'O', n: 4, r: 2.0 }, { species: 'Fe', n: 12, r: 2.92 }, BASE[2]] },
];

/**
 * Split shell i into two groups 2 * half apart with their n-weighted mean at the old distance
 * (so the resolved shell is unchanged).
 */
function split(shells: Shell[], i: number, half: number): Shell[] {
  const s = shells[i];
  const a = Math.ceil(s.n / 2);
  const b = s.n - a;
  return [...shells.slice(0, i), { ...s, n: a, r: s.r - (2 * half * b) / s.n }, { ...s, n: b, r: s.r + (2 * half * a) / s.n }, ...shells.slice(i + 1)];
}

/** Index of the most populated shell (the first of equals). */
function largest(shells: Shell[]): number {
  return shells.reduce((best, s, i) => (s.n > shells[best].n ? i : best), 0);
}

/** The five members of a family: parent and four sub-resolution variants. */
export function familyMembers(parent: Shell[]): { label: string; shells: Shell[] }[] {
  const last = parent.length - 1;
  return [
    { label: 'parent', shells: parent },
    { label: 'first shell split 0.06', shells: split(parent, 0, 0.03) },
    { label: 'largest shell split 0.08', shells: split(parent, largest(parent), 0.04) },
    { label: 'first shell +0.004', shells: parent.map((s, i) => (i === 0 ? { ...s, r: s.r + 0.004 } : s)) },
    { label: 'last shell split 0.10', shells: split(parent, last, 0.05) },
  ];
}

export interface SyntheticSet {
  /** Frame i: family floor(i / 5), member i % 5. */
  frames: { family: number; member: number; label: string; structure: Structure }[];
}

/** The 50 candidates, and write them as one multi-frame XYZ file. */
export function writeSyntheticCandidates(path: string): SyntheticSet {
  const frames: SyntheticSet['frames'] = [];
  FAMILY_PARENTS.forEach((f, family) => {
    familyMembers(f.shells).forEach((m, member) => frames.push({ family, member, label: `${f.label}; ${m.label}`, structure: clusterOf(m.shells) }));
  });
  writeFileSync(path, frames.map((f) => xyzFrame(f.structure, f.label)).join(''));
  return { frames };
}

/** sigma^2 used for the simulation, per distance band (Å^2; invented for the test). */
export function simulationMsrd(r: number): number {
  return r < 2.5 ? 0.003 : r < 3.3 ? 0.005 : 0.007;
}

/**
 * chi(k) (k 0-16 1/Å, step 0.05) of one structure with s0sq 0.9 and e0 2 eV, plus seeded white
 * noise of rms `noise`, as a Chi with the noise estimated from the high-R transform.
 */
export function syntheticChi(structure: Structure, seed: number, noise: number): Chi {
  const set = shellsOfStructure(structure, { absorber: { index: 0 }, radius: 4.6 });
  const tables = tablesForPaths(set, set.paths, parametricProvider, 17);
  const k = Float64Array.from({ length: 321 }, (_, i) => i * 0.05);
  const clean = evaluateModel(k, tables, { s0sq: 0.9, e0: 2, paths: set.paths.map((p) => ({ n: p.degeneracy, r: p.r, msrd: simulationMsrd(p.r), c3: 0, c4: 0 })) }).chi;
  const random = seededRandom(seed);
  const chi = Float64Array.from(clean, (v) => v + noise * random.normal());
  return makeChi({ k, chi, e0: 7112, edgeStep: 1, noise: estimateNoise(k, chi, DEFAULT_NOISE) });
}
