import { describe, expect, it } from 'vitest';
import { buildClusters, parseAbsorberSelector } from '../src/structure/cluster';
import { groupShells } from '../src/paths/pathset';
import { shellsOfStructure } from '../src/paths/index';
import { makeStructure } from '../src/structure/structure';
import { InputError } from '../src/core/errors';
import { hasPythonModules, runPython } from './helpers/python';
import { buildCrystals, CRYSTALS, toStructure } from './helpers/crystals';

const haveAse = hasPythonModules('ase');

describe('shells of fcc Cu (a = 3.6149 Å; expected counts and distances from issue 2: 12 at 2.5561, 6 at 3.6149, 24 at 4.4273, 12 at 5.1122 Å)', () => {
  const a = 3.6149;
  const fcc = makeStructure({
    species: ['Cu', 'Cu', 'Cu', 'Cu'],
    positions: [0, 0, 0, 0, a / 2, a / 2, a / 2, 0, a / 2, a / 2, a / 2, 0],
    lattice: [a, 0, 0, 0, a, 0, 0, 0, a],
  });
  it('gives the four first shells with the right degeneracy and distance (tolerance 1e-4 Å)', () => {
    const set = shellsOfStructure(fcc, { absorber: { element: 'Cu' }, radius: 5.2 });
    const expected = [[12, 2.5561], [6, 3.6149], [24, 4.4273], [12, 5.1122]];
    expect(set.paths.length).toBe(4);
    set.paths.forEach((p, i) => {
      expect(p.degeneracy).toBeCloseTo(expected[i][0], 10);
      expect(Math.abs(p.r - expected[i][1])).toBeLessThan(1e-4);
    });
    expect(set.sites).toBe(4);
  });
  it('averages partial occupancy into fractional degeneracy (half-occupied neighbours give half counts)', () => {
    const half = makeStructure({ species: fcc.species, positions: fcc.positions, lattice: fcc.lattice, occupancy: [1, 0.5, 0.5, 0.5] });
    const [first] = groupShells(buildClusters(half, { absorber: { index: 0 }, radius: 2.6 }));
    expect(first.degeneracy).toBeCloseTo(6, 10);
  });
});

describe.skipIf(!haveAse)('shells against ASE neighbour lists (python3-ase ase.neighborlist.neighbor_list; skipped when python3-ase is absent)', () => {
  const crystals = haveAse ? buildCrystals(CRYSTALS) : [];
  CRYSTALS.forEach((spec, ci) => {
    it(`${spec.name}: every absorber species, radius 6 Å, same distances and counts as ASE (1e-6 Å)`, () => {
      const c = crystals[ci];
      const structure = toStructure(c, spec.name);
      // ASE: distances from each atom of each species to all neighbours within 6 Å
      const ref = runPython<Record<string, number[]>>(`
import json, sys, numpy as np
from ase import Atoms
from ase.neighborlist import neighbor_list
d = json.load(sys.stdin)
a = Atoms(d['symbols'], positions=np.array(d['positions']).reshape(-1, 3), cell=np.array(d['cell']).reshape(3, 3), pbc=True)
i, dist = neighbor_list('id', a, 6.0)
out = {}
for idx in range(len(a)):
    out[str(idx)] = sorted(dist[i == idx].tolist())
print(json.dumps(out))`, c);
      for (const species of new Set(c.symbols)) {
        const clusters = buildClusters(structure, { absorber: { element: species }, radius: 6 });
        for (const cluster of clusters) {
          const ours = Array.from(cluster.distances);
          const theirs = ref[String(cluster.absorber.index)].filter((d) => d > 0.1);
          expect(ours.length).toBe(theirs.length);
          ours.forEach((d, i) => expect(Math.abs(d - theirs[i])).toBeLessThan(1e-6));
        }
        // and the site-averaged shells conserve the total count
        const shells = groupShells(clusters);
        const total = shells.reduce((s, p) => s + p.degeneracy, 0);
        const avg = clusters.reduce((s, cl) => s + ref[String(cl.absorber.index)].filter((d) => d > 0.1).length, 0) / clusters.length;
        expect(total).toBeCloseTo(avg, 9);
      }
    });
  });
});

describe('cluster of a finite structure (no lattice)', () => {
  it('agrees with a brute-force distance list on a random cloud of 3000 atoms (brute-force oracle)', () => {
    let seed = 42;
    const rand = () => (seed = (seed * 16807) % 2147483647) / 2147483647;
    const n = 3000;
    const positions = Array.from({ length: 3 * n }, () => 40 * rand());
    const structure = makeStructure({ species: Array.from({ length: n }, (_, i) => (i % 3 ? 'O' : 'Fe')), positions });
    for (const index of [0, 17, 2999]) {
      const [cluster] = buildClusters(structure, { absorber: { index }, radius: 5 });
      const brute: number[] = [];
      for (let j = 0; j < n; j++) {
        const dx = positions[3 * j] - positions[3 * index];
        const dy = positions[3 * j + 1] - positions[3 * index + 1];
        const dz = positions[3 * j + 2] - positions[3 * index + 2];
        const d = Math.sqrt(dx * dx + dy * dy + dz * dz);
        if (d <= 5 && d >= 0.1) brute.push(d);
      }
      brute.sort((x, y) => x - y);
      expect(cluster.distances.length).toBe(brute.length);
      brute.forEach((d, i) => expect(Math.abs(cluster.distances[i] - d)).toBeLessThan(1e-12));
    }
  });
});

describe('absorber selection', () => {
  const s = makeStructure({ species: ['Fe', 'O'], positions: [0, 0, 0, 0, 0, 2], labels: ['Fe1', 'O1'] });
  it('parses element, index and label forms', () => {
    expect(parseAbsorberSelector('Fe')).toEqual({ element: 'Fe' });
    expect(parseAbsorberSelector('#1')).toEqual({ index: 1 });
    expect(parseAbsorberSelector('label:O1')).toEqual({ label: 'O1' });
    expect(parseAbsorberSelector('Fe1')).toEqual({ label: 'Fe1' });
  });
  it('names the problem when nothing matches', () => {
    expect(() => buildClusters(s, { absorber: { element: 'Cu' } })).toThrow(InputError);
    expect(() => buildClusters(s, { absorber: { element: 'Cu' } })).toThrow(/no Cu atom/);
    expect(() => buildClusters(s, { absorber: { index: 5 } })).toThrow(/outside 0..1/);
    expect(() => buildClusters(s, { absorber: { label: 'X9' } })).toThrow(/no site labelled/);
  });
});
