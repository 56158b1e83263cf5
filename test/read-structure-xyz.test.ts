import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { InputError } from '../src/core/errors';
import { readXyz, writeXyz, XYZ_FORMAT } from '../src/read/structure/xyz';
import { errorOf } from './helpers/errors';

const FIXTURES = new URL('./fixtures/structures/', import.meta.url).pathname;
const CU_NACL = `${FIXTURES}cu13-nacl8.xyz`;
// fcc Cu a = 3.6149 Å, NaCl a = 5.6402 Å: from memory (Wyckoff, Crystal Structures vol. 1).
const A_CU = 3.6149;
const A_NACL = 5.6402;

function distance(p: Float64Array, i: number, j: number): number {
  return Math.hypot(p[3 * i] - p[3 * j], p[3 * i + 1] - p[3 * j + 1], p[3 * i + 2] - p[3 * j + 2]);
}


describe('readXyz on the Cu13 + NaCl8 two-frame fixture', () => {
  const frames = readXyz(readFileSync(CU_NACL, 'utf8'), CU_NACL);

  it('reads both frames with their counts, titles and no lattice', () => {
    expect(frames).toHaveLength(2);
    expect(frames[0].species).toHaveLength(13);
    expect(frames[1].species).toHaveLength(8);
    expect(frames[0].info.title).toMatch(/^Cu13 cuboctahedron/);
    expect(frames[1].info.frame).toBe(1);
    expect(frames[0].lattice).toBeNull();
    expect(frames[0].info.format).toBe('xyz');
  });

  it('puts the 12 Cu neighbours at a/sqrt(2) = 2.5561 Å from the centre', () => {
    // fcc nearest-neighbour distance a/sqrt(2) (geometry: 2.5561 Å); file has 6 decimals
    for (let j = 1; j < 13; j++) expect(distance(frames[0].positions, 0, j)).toBeCloseTo(A_CU / Math.SQRT2, 5);
    expect(A_CU / Math.SQRT2).toBeCloseTo(2.5561, 4);
  });

  it('reads atomic numbers 11 and 17 as Na and Cl, Na-Cl at a/2', () => {
    expect(new Set(frames[1].species)).toEqual(new Set(['Na', 'Cl']));
    expect(frames[1].species.filter((s) => s === 'Na')).toHaveLength(4);
    // atoms 0 (0,0,0) and 1 (0,0,a/2) in the file: rock-salt Na-Cl distance a/2 (geometry)
    expect(distance(frames[1].positions, 0, 1)).toBeCloseTo(A_NACL / 2, 5);
    expect(frames[1].labels[0]).toBe('Na1');
  });
});

describe('readXyz edge cases', () => {
  const cu2 = '2\ntwo atoms\nCu 0 0 0\ncu 1.5 0 0\n';

  it('accepts CRLF, a byte-order mark, lower-case symbols and extra columns', () => {
    const s = readXyz('\ufeff2\r\nc\r\nCu 0 0 0 extra\r\ncu 1.5 0 0 7\r\n', 'a.xyz');
    expect(s[0].species).toEqual(['Cu', 'Cu']);
    expect(s[0].positions[3]).toBe(1.5);
  });

  it('tolerates trailing blank lines and blank lines between frames', () => {
    expect(readXyz(`${cu2}\n\n   \n`, 'a.xyz')).toHaveLength(1);
    expect(readXyz(`${cu2}\n${cu2}`, 'a.xyz')).toHaveLength(2);
  });

  it('accepts a frame of zero atoms', () => {
    expect(readXyz('0\nempty\n', 'a.xyz')[0].species).toHaveLength(0);
  });

  it('rejects a count larger than the atom lines, naming the line where the file ends', () => {
    const e = errorOf(() => readXyz('3\nc\nCu 0 0 0\nCu 1 0 0\n', 'big.xyz'));
    expect(e.file).toBe('big.xyz');
    expect(e.line).toBe(4);
    expect(e.reason).toMatch(/ends after 2 of the 3 atoms/);
  });

  it('rejects a count smaller than the atom lines at the first extra line', () => {
    const e = errorOf(() => readXyz('1\nc\nCu 0 0 0\nCu 1 0 0\n', 'small.xyz'));
    expect(e.line).toBe(4);
    expect(e.reason).toMatch(/atom count/);
  });

  it('rejects a non-numeric coordinate with its line', () => {
    const e = errorOf(() => readXyz('2\nc\nCu 0 0 0\nCu 1 zero 0\n', 'c.xyz'));
    expect(e.line).toBe(4);
    expect(e.reason).toMatch(/y coordinate 'zero'/);
  });

  it('rejects hexadecimal, infinite and NaN coordinates', () => {
    for (const bad of ['0x10', 'Infinity', 'NaN', '1e999', '1.2.3']) {
      expect(errorOf(() => readXyz(`1\nc\nCu 0 ${bad} 0\n`, 'c.xyz')).line).toBe(3);
    }
  });

  it('rejects unknown species and atomic numbers outside 1-96', () => {
    expect(errorOf(() => readXyz('1\nc\nXx 0 0 0\n', 'u.xyz')).reason).toMatch(/unknown species 'Xx'/);
    expect(errorOf(() => readXyz('1\nc\n97 0 0 0\n', 'u.xyz')).line).toBe(3);
    expect(errorOf(() => readXyz('1\nc\n0 0 0 0\n', 'u.xyz')).line).toBe(3);
  });

  it('rejects short atom lines, a missing comment line, a bad count and an empty file', () => {
    expect(errorOf(() => readXyz('1\nc\nCu 0 0\n', 'a.xyz')).line).toBe(3);
    expect(errorOf(() => readXyz('1\n', 'a.xyz')).line).toBe(1);
    expect(errorOf(() => readXyz('-1\nc\n', 'a.xyz')).line).toBe(1);
    expect(errorOf(() => readXyz('1.5\nc\nCu 0 0 0\n', 'a.xyz')).line).toBe(1);
    expect(errorOf(() => readXyz('', 'a.xyz')).line).toBe(1);
    expect(errorOf(() => readXyz('\n \n', 'a.xyz')).line).toBe(2);
  });

  it('rejects a count that the rest of the file cannot hold without allocating it', () => {
    expect(errorOf(() => readXyz('999999999999\nc\nCu 0 0 0\n', 'a.xyz')).line).toBe(1);
  });
});

describe('writeXyz', () => {
  it('writes what readXyz reads back exactly', () => {
    const [frame] = readXyz(readFileSync(CU_NACL, 'utf8'), CU_NACL);
    const [again] = readXyz(writeXyz(frame), 'w.xyz');
    expect(again.species).toEqual(frame.species);
    expect(Array.from(again.positions)).toEqual(Array.from(frame.positions));
    expect(again.info.title).toBe(frame.info.title);
  });

  it('refuses a lattice, which plain XYZ cannot hold', () => {
    const text = readFileSync(`${FIXTURES}znse-cu.extxyz`, 'utf8');
    expect(XYZ_FORMAT.sniff(text)).toBe(true); // extended XYZ also looks like plain XYZ
    const periodic = { ...readXyz(text, 'z.xyz')[0], lattice: Float64Array.from([1, 0, 0, 0, 1, 0, 0, 0, 1]) };
    expect(() => writeXyz(periodic)).toThrow(InputError);
  });
});

describe('sniffXyz', () => {
  it('accepts an XYZ file and rejects CIF and PDB text', () => {
    expect(XYZ_FORMAT.sniff(readFileSync(CU_NACL, 'utf8'))).toBe(true);
    expect(XYZ_FORMAT.sniff(readFileSync(`${FIXTURES}cu-p1.cif`, 'utf8'))).toBe(false);
    expect(XYZ_FORMAT.sniff(readFileSync(`${FIXTURES}znse.pdb`, 'utf8'))).toBe(false);
    expect(XYZ_FORMAT.sniff('')).toBe(false);
  });
});
