/**
 * Crystal structures for tests, built with ASE (python3-ase) from handbook lattice constants.
 * Lattice constants (room temperature): from memory of Wyckoff, Crystal Structures, 2nd ed.
 * (Interscience, 1963), vol. 1, unless noted; each is also the value the issues quote.
 */
import { makeStructure, type Structure } from '../../src/structure/structure';
import { runPython } from './python';

export interface CrystalSpec {
  name: string;
  /** Python expression building an ase.Atoms (ase, ase.build.bulk and ase.spacegroup.crystal in scope). */
  build: string;
}

export const CRYSTALS: CrystalSpec[] = [
  // fcc Cu, a = 3.6149 Å (from memory, Wyckoff, Crystal Structures vol. 1)
  { name: 'Cu fcc', build: "bulk('Cu', 'fcc', a=3.6149, cubic=True)" },
  // bcc Fe, a = 2.8665 Å (from memory): nearest neighbours at a sqrt(3) / 2 = 2.482 Å
  { name: 'Fe bcc', build: "bulk('Fe', 'bcc', a=2.8665, cubic=True)" },
  // hcp Mg, a = 3.2094, c = 5.2108 Å (from memory)
  { name: 'Mg hcp', build: "bulk('Mg', 'hcp', a=3.2094, c=5.2108)" },
  // zinc-blende ZnSe, a = 5.6676 Å (from memory): Zn-Se at a sqrt(3) / 4 = 2.454 Å
  { name: 'ZnSe zinc blende', build: "bulk('ZnSe', 'zincblende', a=5.6676, cubic=True)" },
  // rock-salt NaCl, a = 5.6402 Å (from memory)
  { name: 'NaCl rock salt', build: "bulk('NaCl', 'rocksalt', a=5.6402, cubic=True)" },
  // corundum Al2O3, R-3c (167), a = 4.7589, c = 12.991 Å, Al (0, 0, 0.3523), O (0.3064, 0, 1/4) (from memory)
  { name: 'Al2O3 corundum', build: "crystal(['Al', 'O'], basis=[(0, 0, 0.3523), (0.3064, 0, 0.25)], spacegroup=167, cellpar=[4.7589, 4.7589, 12.991, 90, 90, 120])" },
];

export interface AseCrystal {
  symbols: string[];
  positions: number[];
  cell: number[];
}

/** Build the crystals in ASE and return them as plain arrays. */
export function buildCrystals(specs: CrystalSpec[]): AseCrystal[] {
  const script = `
import json, sys
from ase.build import bulk
from ase.spacegroup import crystal
out = []
for expr in json.load(sys.stdin):
    a = eval(expr)
    out.append({'symbols': a.get_chemical_symbols(), 'positions': a.positions.flatten().tolist(), 'cell': a.cell.array.flatten().tolist()})
print(json.dumps(out))`;
  return runPython<AseCrystal[]>(script, specs.map((s) => s.build));
}

export function toStructure(c: AseCrystal, name: string): Structure {
  return makeStructure({ species: c.symbols, positions: c.positions, lattice: c.cell, info: { title: name } });
}
