/**
 * Element absorbers on finite clusters: only sites deeper below the surface than the radius are
 * averaged (their shells are complete), else the deepest site alone, with a warning naming the
 * sites used. Checked against the coordination numbers of the fcc lattice, 12, 6, 24 and 12 for
 * the first four shells at a/sqrt2, a, a*sqrt(3/2) and a*sqrt2 (Kittel, Introduction to Solid
 * State Physics, 8th ed., ch. 1, table 3 for the 12 nearest neighbours; the others by counting
 * the lattice vectors of the shells, common practice, no source), and against python3-ase's
 * neighbour lists when it is installed.
 */
import { describe, it, expect } from 'vitest';
import { join } from 'node:path';
import { shellsOfStructure } from '../src/paths/index';
import { loadStructureFile, pickFrame } from '../src/read/load-structure';
import { makeStructure, type Structure } from '../src/structure/structure';
import { selectAbsorberSites } from '../src/structure/cluster';
import { hasPythonModules, runPython } from './helpers/python';

/** Ni lattice constant, Å (3.524, from memory). */
const A = 3.524;

/** An fcc cube of n x n x n conventional cells, Ni, finite (no cell). */
function fccCube(n: number): Structure {
  const basis = [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
  const positions: number[] = [];
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let k = 0; k < n; k++) {
    for (const b of basis) positions.push((i + b[0]) * A, (j + b[1]) * A, (k + b[2]) * A);
  }
  return makeStructure({ species: positions.filter((_, i) => i % 3 === 0).map(() => 'Ni'), positions });
}

describe('element absorbers on finite clusters', () => {
  it('gives the fcc coordination numbers 12, 6, 24, 12 on a cube of 6^3 cells, with a warning', () => {
    const set = shellsOfStructure(fccCube(6), { absorber: { element: 'Ni' }, radius: 5.1 });
    expect(set.paths.map((p) => Math.round(p.degeneracy * 1000) / 1000)).toEqual([12, 6, 24, 12]);
    expect(set.paths.map((p) => p.r)).toEqual([A / Math.SQRT2, A, A * Math.sqrt(1.5), A * Math.SQRT2].map((r) => expect.closeTo(r, 6)));
    expect(set.sites).toBeGreaterThan(1);
    expect(set.sites).toBeLessThan(864);
    expect(set.warnings?.[0]).toMatch(/finite cluster: averaged \d+ of 864 absorber sites/);
  });

  it('averages the demo Ni particle to 12 nearest neighbours (was 8.36 over all 99 sites)', () => {
    const file = join(__dirname, '..', 'structures', 'ni-metal-fcc.xyz');
    const structure = pickFrame(loadStructureFile(file), 0);
    const set = shellsOfStructure(structure, { absorber: { element: 'Ni' }, radius: 3.2 });
    expect(set.paths.map((p) => p.degeneracy)).toEqual([12]);
    expect(set.warnings).toHaveLength(1);
  });

  it('falls back to the deepest site of a 13-atom cuboctahedron and says so', () => {
    // centre plus the 12 nearest neighbours of fcc, the central atom listed last
    const d = A / 2;
    const positions: number[] = [];
    for (const [x, y] of [[1, 1], [1, -1], [-1, 1], [-1, -1]]) positions.push(x * d, y * d, 0, x * d, 0, y * d, 0, x * d, y * d);
    positions.push(0, 0, 0);
    const structure = makeStructure({ species: Array(13).fill('Ni'), positions });
    const selection = selectAbsorberSites(structure, { element: 'Ni' }, 3);
    expect(selection).toMatchObject({ used: [12], excluded: 12, fallback: true });
    expect(selection.warning).toMatch(/used the deepest one alone \(atom 12/);
    expect(shellsOfStructure(structure, { absorber: { element: 'Ni' }, radius: 3 }).paths.map((p) => p.degeneracy)).toEqual([12]);
  });

  it('leaves periodic structures and single chosen atoms alone', () => {
    const cube = fccCube(3);
    expect(selectAbsorberSites(cube, { index: 0 }, 5)).toMatchObject({ used: [0], warning: null });
    const periodic = makeStructure({ species: ['Ni', 'Ni', 'Ni', 'Ni'], positions: [0, 0, 0, 0, d2(), d2(), d2(), 0, d2(), d2(), d2(), 0], lattice: [A, 0, 0, 0, A, 0, 0, 0, A] });
    expect(selectAbsorberSites(periodic, { element: 'Ni' }, 5)).toMatchObject({ used: [0, 1, 2, 3], warning: null });
  });
});

function d2(): number {
  return A / 2;
}

describe.skipIf(!hasPythonModules('ase'))('against python3-ase neighbour lists (skipped when python3-ase is absent)', () => {
  it('the averaged sites of an fcc octahedron have the coordination ASE counts for them', () => {
    // ase.cluster.Octahedron: a finite fcc particle (python3-ase)
    const ref = runPython<{ positions: number[]; counts: number[] }>(`
import json
from ase.cluster import Octahedron
from ase.neighborlist import neighbor_list
atoms = Octahedron('Ni', 9, cutoff=2, latticeconstant=${A})
i = neighbor_list('i', atoms, 3.2)
counts = [int((i == a).sum()) for a in range(len(atoms))]
print(json.dumps({'positions': atoms.positions.flatten().tolist(), 'counts': counts}))
`);
    const structure = makeStructure({ species: ref.counts.map(() => 'Ni'), positions: ref.positions });
    const selection = selectAbsorberSites(structure, { element: 'Ni' }, 3.2);
    expect(selection.used.length).toBeGreaterThan(0);
    for (const i of selection.used) expect(ref.counts[i]).toBe(12);
    // the site average of all atoms would be lower (surface atoms have fewer neighbours)
    expect(ref.counts.reduce((a, b) => a + b, 0) / ref.counts.length).toBeLessThan(12);
    const set = shellsOfStructure(structure, { absorber: { element: 'Ni' }, radius: 3.2 });
    expect(set.paths[0].degeneracy).toBeCloseTo(12, 9);
  });
});
