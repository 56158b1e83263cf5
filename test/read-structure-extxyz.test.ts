import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { InputError } from '../src/core/errors';
import { EXTXYZ_FORMAT, parseCommentPairs, readExtxyz, writeExtxyz } from '../src/read/structure/extxyz';
import { errorOf } from './helpers/errors';

const FIXTURES = new URL('./fixtures/structures/', import.meta.url).pathname;
const ZNSE_CU = `${FIXTURES}znse-cu.extxyz`;
// ZnSe zinc blende a = 5.6676 Å, fcc Cu a = 3.6149 Å: from memory (Wyckoff, Crystal Structures vol. 1).
const A_ZNSE = 5.6676;
const A_CU = 3.6149;


describe('readExtxyz on the ZnSe + Cu fixture', () => {
  const frames = readExtxyz(readFileSync(ZNSE_CU, 'utf8'), ZNSE_CU);

  it('reads two periodic frames with their cubic cells', () => {
    expect(frames).toHaveLength(2);
    expect(Array.from(frames[0].lattice!)).toEqual([A_ZNSE, 0, 0, 0, A_ZNSE, 0, 0, 0, A_ZNSE]);
    expect(Array.from(frames[1].lattice!)).toEqual([A_CU, 0, 0, 0, A_CU, 0, 0, 0, A_CU]);
    expect(frames[0].info.extra?.source).toMatch(/ZnSe zinc blende/);
  });

  it('skips the forces columns by their declared width and reads the occupancy column', () => {
    expect(frames[0].species).toEqual(['Zn', 'Zn', 'Zn', 'Zn', 'Se', 'Se', 'Se', 'Se']);
    expect(Array.from(frames[0].occupancy)).toEqual(new Array(8).fill(1));
    // Zn-Se bond of zinc blende: a*sqrt(3)/4 = 2.4542 Å (geometry)
    const p = frames[0].positions;
    expect(Math.hypot(p[12] - p[0], p[13] - p[1], p[14] - p[2])).toBeCloseTo((A_ZNSE * Math.sqrt(3)) / 4, 5);
  });
});

describe('extended XYZ comment line', () => {
  it('splits quoted values, escapes, braces and bare flags', () => {
    const pairs = parseCommentPairs('a=1 b="two words" c="say \\"hi\\"" d={x y} flag e = 5', 'f', 2);
    expect(pairs).toEqual([
      { key: 'a', value: '1' }, { key: 'b', value: 'two words' }, { key: 'c', value: 'say "hi"' },
      { key: 'd', value: 'x y' }, { key: 'flag', value: 'T' }, { key: 'e', value: '5' },
    ]);
  });

  it('names the comment line on an unterminated quote', () => {
    const e = errorOf(() => readExtxyz('1\nLattice="1 0 0 0 1 0 0 0 1\nCu 0 0 0\n', 'q.extxyz'));
    expect(e.line).toBe(2);
    expect(e.file).toBe('q.extxyz');
  });
});

describe('extended XYZ columns and cells', () => {
  const cell = 'Lattice="3 0 0 0 3 0 0 0 3"';

  it('reads Z:I:1 as the species when there is no species column, and a label column', () => {
    const [s] = readExtxyz(`2\n${cell} Properties=Z:I:1:pos:R:3:label:S:1\n29 0 0 0 CuA\n8 1.5 0 0 O7\n`, 'z.extxyz');
    expect(s.species).toEqual(['Cu', 'O']);
    expect(s.labels).toEqual(['CuA', 'O7']);
  });

  it('requires the exact number of declared columns', () => {
    const e = errorOf(() => readExtxyz(`1\n${cell} Properties=species:S:1:pos:R:3:q:R:2\nCu 0 0 0 1\n`, 'c.extxyz'));
    expect(e.line).toBe(3);
    expect(e.reason).toMatch(/expected 6 columns/);
  });

  it('rejects malformed Properties with the key named', () => {
    for (const p of ['species:S:1:pos:R', 'species:S:1:pos:R:2', 'species:X:1:pos:R:3', 'pos:R:3', 'species:S:1']) {
      const e = errorOf(() => readExtxyz(`1\nProperties=${p}\nCu 0 0 0\n`, 'p.extxyz'));
      expect(e.key).toBe('Properties');
      expect(e.line).toBe(2);
    }
  });

  it('rejects an occupancy outside 0..1 and a degenerate or short lattice', () => {
    expect(errorOf(() => readExtxyz('1\nProperties=species:S:1:pos:R:3:occ:R:1\nCu 0 0 0 1.5\n', 'o.extxyz')).line).toBe(3);
    expect(errorOf(() => readExtxyz('1\nLattice="1 0 0 2 0 0 0 0 1"\nCu 0 0 0\n', 'l.extxyz')).key).toBe('Lattice');
    expect(errorOf(() => readExtxyz('1\nLattice="1 0 0 0 1 0 0 0"\nCu 0 0 0\n', 'l.extxyz')).key).toBe('Lattice');
  });

  it('drops the lattice for pbc="F F F" and warns for partial periodicity', () => {
    const [box] = readExtxyz(`1\n${cell} pbc="F F F"\nCu 0 0 0\n`, 'b.extxyz');
    expect(box.lattice).toBeNull();
    const [slab] = readExtxyz(`1\n${cell} pbc="T T F"\nCu 0 0 0\n`, 's.extxyz');
    expect(slab.lattice).not.toBeNull();
    expect(slab.info.extra?.warning).toMatch(/periodic in only some directions/);
    expect(errorOf(() => readExtxyz('1\npbc="T T T" Properties=species:S:1:pos:R:3\nCu 0 0 0\n', 'n.extxyz')).key).toBe('pbc');
  });
});

describe('writeExtxyz', () => {
  it('round-trips lattice, occupancy, labels and extra keys', () => {
    const text = '2\nLattice="4 0 0 0.5 4 0 0 0 5" Properties=species:S:1:pos:R:3:occupancy:R:1:label:S:1 note="a b"\n'
      + 'Fe 0.1 0.2 0.3 0.25 Fe_a\nNi 1e-7 2 3 0.75 Ni_b\n';
    const [s] = readExtxyz(text, 'r.extxyz');
    const [t] = readExtxyz(writeExtxyz(s), 'w.extxyz');
    expect(t.species).toEqual(s.species);
    expect(Array.from(t.positions)).toEqual(Array.from(s.positions));
    expect(Array.from(t.occupancy)).toEqual([0.25, 0.75]);
    expect(t.labels).toEqual(['Fe_a', 'Ni_b']);
    expect(Array.from(t.lattice!)).toEqual([4, 0, 0, 0.5, 4, 0, 0, 0, 5]);
    expect(t.info.extra?.note).toBe('a b');
  });

  it('sniffs its own output but not a plain XYZ file', () => {
    const [s] = readExtxyz(readFileSync(ZNSE_CU, 'utf8'), ZNSE_CU);
    expect(EXTXYZ_FORMAT.sniff(writeExtxyz(s))).toBe(true);
    expect(EXTXYZ_FORMAT.sniff(readFileSync(`${FIXTURES}cu13-nacl8.xyz`, 'utf8'))).toBe(false);
  });
});
