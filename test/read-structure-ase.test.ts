/**
 * Cross-checks of the structure readers against ASE's readers and space-group tables, and against
 * spglib's symmetry finder (Debian python3-ase 3.22.1, python3-spglib), via /usr/bin/python3.
 */
import { describe, it, expect } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { invertCell, type Structure } from '../src/structure/structure';
import { readStructureFile, readStructureText, writeCif, writeExtxyz } from '../src/read/structure/index';
import { hasPythonModules, runPython } from './helpers/python';

const FIXTURES = new URL('./fixtures/structures/', import.meta.url).pathname;
const HAS_ASE = hasPythonModules('ase', 'numpy');
const HAS_SPGLIB = HAS_ASE && hasPythonModules('spglib');

interface AseFrame {
  symbols: string[];
  positions: number[][];
  cell: number[][];
  pbc: boolean[];
}

/** ase.io.read(path, index) for each request; frames as plain JSON. */
const READ_WITH_ASE = `
import json, sys, warnings
warnings.simplefilter('ignore')
import ase.io
out = []
for request in json.load(sys.stdin):
    frames = ase.io.read(request['path'], index=request['index'], format=request.get('format'))
    if not isinstance(frames, list):
        frames = [frames]
    out.append([{'symbols': a.get_chemical_symbols(), 'positions': a.positions.tolist(),
                 'cell': a.cell.array.tolist(), 'pbc': a.pbc.tolist()} for a in frames])
print(json.dumps(out))
`;

function fractions(s: { positions: ArrayLike<number>; lattice: ArrayLike<number> }, i: number): number[] {
  const inverse = invertCell(Float64Array.from(s.lattice));
  const p = s.positions;
  return [0, 1, 2].map((j) => p[3 * i] * inverse[j] + p[3 * i + 1] * inverse[3 + j] + p[3 * i + 2] * inverse[6 + j]);
}

/** Every atom of `ours` has exactly one partner of the same species in `theirs` within `tolerance` (fractional, periodic). */
function expectSameCrystalAtoms(ours: Structure, theirs: AseFrame, tolerance: number): void {
  expect(ours.species.length).toBe(theirs.symbols.length);
  const theirLattice = theirs.cell.flat();
  const theirFractions = theirs.symbols.map((_, i) => fractions({ positions: theirs.positions.flat(), lattice: theirLattice }, i));
  const used = new Set<number>();
  for (let i = 0; i < ours.species.length; i++) {
    const f = fractions({ positions: ours.positions, lattice: ours.lattice! }, i);
    const partner = theirFractions.findIndex((g, j) => !used.has(j) && theirs.symbols[j] === ours.species[i]
      && g.every((v, k) => Math.abs(v - f[k] - Math.round(v - f[k])) < tolerance));
    expect(partner, `atom ${i + 1} (${ours.species[i]} at ${f.map((v) => v.toFixed(4)).join(' ')})`).toBeGreaterThanOrEqual(0);
    used.add(partner);
  }
}

/** Same atoms in the same order at the same Cartesian positions. */
function expectSameOrderedAtoms(ours: Structure, theirs: AseFrame, tolerance: number): void {
  expect(ours.species).toEqual(theirs.symbols);
  const flat = theirs.positions.flat();
  for (let k = 0; k < flat.length; k++) expect(Math.abs(ours.positions[k] - flat[k])).toBeLessThan(tolerance);
}

describe.skipIf(!HAS_ASE)('structure readers agree with ASE (python3-ase via /usr/bin/python3; skipped when it is absent)', () => {
  const files = ['cu13-nacl8.xyz', 'znse-cu.extxyz', 'znse.pdb', 'cu13-models.pdb', 'cu-fm3m.cif', 'cu-p1.cif', 'nacl-fm3m.cif', 'corundum-r3c.cif'];
  // ASE cannot read atomic numbers in an XYZ species column, so only frame 1 of the XYZ fixture is compared.
  const requests = files.map((name) => ({ path: `${FIXTURES}${name}`, index: name.endsWith('.xyz') ? '0' : ':' }));
  const ase = HAS_ASE ? runPython<AseFrame[][]>(READ_WITH_ASE, requests) : [];
  const theirs = (name: string) => ase[files.indexOf(name)];
  const ours = (name: string) => readStructureFile(`${FIXTURES}${name}`);

  it('XYZ: same species and Cartesian positions (1e-9 Å)', () => {
    expectSameOrderedAtoms(ours('cu13-nacl8.xyz')[0], theirs('cu13-nacl8.xyz')[0], 1e-9);
  });

  it('extended XYZ: same frames, species, positions and cells (1e-9 Å)', () => {
    const a = ours('znse-cu.extxyz');
    const b = theirs('znse-cu.extxyz');
    expect(a).toHaveLength(b.length);
    a.forEach((frame, k) => {
      expectSameOrderedAtoms(frame, b[k], 1e-9);
      expect(Array.from(frame.lattice!)).toEqual(b[k].cell.flat());
      expect(b[k].pbc).toEqual([true, true, true]);
    });
  });

  it('PDB: same models, species, positions, and the CRYST1 cell (1e-9 Å)', () => {
    const a = ours('znse.pdb');
    const b = theirs('znse.pdb');
    expectSameOrderedAtoms(a[0], b[0], 1e-9);
    const cell = b[0].cell.flat();
    for (let k = 0; k < 9; k++) expect(Math.abs(a[0].lattice![k] - cell[k])).toBeLessThan(1e-9);
    const models = ours('cu13-models.pdb');
    // ASE 3.22 also returns an empty frame after the last ENDMDL; compare the frames with atoms.
    const aseModels = theirs('cu13-models.pdb').filter((f) => f.symbols.length > 0);
    expect(models).toHaveLength(aseModels.length);
    models.forEach((frame, k) => expectSameOrderedAtoms(frame, aseModels[k], 1e-9));
    expect(aseModels[0].pbc).toEqual([false, false, false]);
    expect(models[0].lattice).toBeNull();
  });

  it('CIF: the same symmetry-expanded atoms and cells as ase.io.read (1e-6 fractional)', () => {
    for (const name of ['cu-fm3m.cif', 'cu-p1.cif', 'nacl-fm3m.cif', 'corundum-r3c.cif']) {
      const a = ours(name)[0];
      const b = theirs(name)[0];
      expectSameCrystalAtoms(a, b, 1e-6);
      const cell = b.cell.flat();
      for (let k = 0; k < 9; k++) expect(Math.abs(a.lattice![k] - cell[k]), `${name} cell[${k}]`).toBeLessThan(1e-9);
    }
  });

  it('corundum: our expansion of the typed operators equals ASE\'s own R-3c table (spacegroup 167)', () => {
    // ase.spacegroup.crystal builds the atoms from ASE's table, not from the fixture's operator list
    const [frame] = runPython<AseFrame[]>(`
import json, warnings
warnings.simplefilter('ignore')
from ase.spacegroup import crystal
a = crystal(['Al', 'O'], basis=[(0, 0, 0.35216), (0.30624, 0, 0.25)], spacegroup=167,
            cellpar=[4.7589, 4.7589, 12.991, 90, 90, 120])
print(json.dumps([{'symbols': a.get_chemical_symbols(), 'positions': a.positions.tolist(), 'cell': a.cell.array.tolist(), 'pbc': a.pbc.tolist()}]))
`);
    expectSameCrystalAtoms(ours('corundum-r3c.cif')[0], frame, 1e-6);
  });

  it('corundum written in P 1 by ASE reads back as the same atoms as our expansion', () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-ase-'));
    try {
      const path = join(dir, 'corundum-p1.cif');
      runPython<null>(`
import json, sys, warnings
warnings.simplefilter('ignore')
import ase.io
from ase.spacegroup import crystal
a = crystal(['Al', 'O'], basis=[(0, 0, 0.35216), (0.30624, 0, 0.25)], spacegroup=167,
            cellpar=[4.7589, 4.7589, 12.991, 90, 90, 120])
ase.io.write(json.load(sys.stdin), a, format='cif')
print('null')
`, path);
      const p1 = readStructureText(readFileSync(path, 'utf8'), path)[0];
      const expanded = ours('corundum-r3c.cif')[0];
      expect(p1.species).toHaveLength(30);
      const asFrame: AseFrame = {
        symbols: [...p1.species],
        positions: Array.from({ length: p1.species.length }, (_, i) => Array.from(p1.positions.slice(3 * i, 3 * i + 3))),
        cell: [Array.from(p1.lattice!.slice(0, 3)), Array.from(p1.lattice!.slice(3, 6)), Array.from(p1.lattice!.slice(6, 9))],
        pbc: [true, true, true],
      };
      // ASE writes fractional coordinates with a limited number of digits: 1e-5 fractional
      expectSameCrystalAtoms(expanded, asFrame, 1e-5);
    } finally {
      rmSync(dir, { recursive: true });
    }
  });
});

describe.skipIf(!HAS_ASE)('files from our writers read the same in ASE (python3-ase; skipped when it is absent)', () => {
  it('P 1 CIF of corundum and extended XYZ of ZnSe', () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-write-'));
    try {
      const corundum = readStructureFile(`${FIXTURES}corundum-r3c.cif`)[0];
      const znse = readStructureFile(`${FIXTURES}znse-cu.extxyz`)[0];
      const cifPath = join(dir, 'corundum.cif');
      const xyzPath = join(dir, 'znse.extxyz');
      writeFileSync(cifPath, writeCif(corundum));
      writeFileSync(xyzPath, writeExtxyz(znse));
      const [cif, xyz] = runPython<AseFrame[][]>(READ_WITH_ASE, [{ path: cifPath, index: ':' }, { path: xyzPath, index: ':' }]);
      expectSameCrystalAtoms(corundum, cif[0], 1e-9);
      expectSameOrderedAtoms(znse, xyz[0], 1e-12);
      expect(xyz[0].cell.flat()).toEqual(Array.from(znse.lattice!));
    } finally {
      rmSync(dir, { recursive: true });
    }
  });
});

describe.skipIf(!HAS_SPGLIB)('expanded crystals have the expected space groups (python3-spglib via /usr/bin/python3; skipped when absent)', () => {
  it('spglib finds Fm-3m for Cu and NaCl, R-3c for corundum, F-43m for ZnSe', () => {
    // expected groups: International Tables numbers of the handbook structures (from memory):
    // fcc Cu and rock salt 225 (Fm-3m), corundum 167 (R-3c), zinc blende 216 (F-43m)
    const cases: [string, number][] = [['cu-fm3m.cif', 225], ['nacl-fm3m.cif', 225], ['corundum-r3c.cif', 167], ['znse-cu.extxyz', 216]];
    const input = cases.map(([name]) => {
      const s = readStructureFile(`${FIXTURES}${name}`)[0];
      return {
        lattice: [Array.from(s.lattice!.slice(0, 3)), Array.from(s.lattice!.slice(3, 6)), Array.from(s.lattice!.slice(6, 9))],
        fractions: s.species.map((_, i) => fractions({ positions: s.positions, lattice: s.lattice! }, i)),
        species: [...s.species],
      };
    });
    const numbers = runPython<number[]>(`
import json, sys, spglib
out = []
for c in json.load(sys.stdin):
    kinds = sorted(set(c['species']))
    data = spglib.get_symmetry_dataset((c['lattice'], c['fractions'], [kinds.index(s) for s in c['species']]), symprec=1e-3)
    out.append(int(data['number']))
print(json.dumps(out))
`, input);
    expect(numbers).toEqual(cases.map(([, n]) => n));
  });
});
