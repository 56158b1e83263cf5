import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { InputError } from '../src/core/errors';
import { PDB_FORMAT, readPdb } from '../src/read/structure/pdb';
import { errorOf } from './helpers/errors';

const FIXTURES = new URL('./fixtures/structures/', import.meta.url).pathname;
// ZnSe a = 5.6676 Å (from memory), written in the fixture as 5.668 (CRYST1 has 3 decimals).
// fcc Cu a = 3.6149 Å (from memory, Wyckoff).


/** One ATOM record in the columns of the wwPDB format description v3.3. */
function atom(name: string, x: number, y: number, z: number, occupancy: string, element: string): string {
  const f = (v: number) => v.toFixed(3).padStart(8);
  return `ATOM  ${'1'.padStart(5)} ${name.padEnd(4)} RES A   1    ${f(x)}${f(y)}${f(z)}${occupancy.padStart(6)}  0.00          ${element.padStart(2)}`;
}

describe('readPdb on the fixtures', () => {
  it('reads the ZnSe cell from CRYST1 and the elements from columns 77-78', () => {
    const [s] = readPdb(readFileSync(`${FIXTURES}znse.pdb`, 'utf8'), 'znse.pdb');
    expect(s.species).toEqual(['Zn', 'Zn', 'Zn', 'Zn', 'Se', 'Se', 'Se', 'Se']);
    expect(Array.from(s.lattice!).map((v) => +v.toFixed(9))).toEqual([5.668, 0, 0, 0, 5.668, 0, 0, 0, 5.668]);
    expect(s.labels[0]).toBe('ZN');
    expect(s.info.extra?.warning).toBeUndefined(); // P 1, elements given
    // Zn-Se bond of zinc blende: a*sqrt(3)/4 = 2.4542 Å (geometry); 3-decimal coordinates
    const p = s.positions;
    expect(Math.hypot(p[12] - p[0], p[13] - p[1], p[14] - p[2])).toBeCloseTo((5.6676 * Math.sqrt(3)) / 4, 2);
  });

  it('reads MODEL/ENDMDL as frames and falls back to atom names, saying so', () => {
    const frames = readPdb(readFileSync(`${FIXTURES}cu13-models.pdb`, 'utf8'), 'cu.pdb');
    expect(frames).toHaveLength(2);
    expect(frames.map((f) => f.info.extra?.model)).toEqual(['1', '2']);
    expect(frames[1].species.every((s) => s === 'Cu')).toBe(true);
    expect(frames[1].info.extra?.warning).toMatch(/13 atoms have blank element columns/);
    expect(frames[0].lattice).toBeNull();
    expect(Array.from(frames[1].positions)).toEqual(Array.from(frames[0].positions));
  });
});

describe('readPdb columns and records', () => {
  it('tells " CA " (carbon) from "CA  " (calcium) when the element columns are blank', () => {
    // PDB convention: the element is right-justified in columns 13-14 of the name (wwPDB v3.3)
    const text = `${atom(' CA', 0, 0, 0, '1.00', '').slice(0, 66)}\n${atom('CA', 1, 0, 0, '1.00', '').slice(0, 66)}\n`;
    expect(readPdb(text, 'n.pdb')[0].species).toEqual(['C', 'Ca']);
  });

  it('reads occupancy, and 1 when the columns are absent', () => {
    const text = `${atom('FE', 0, 0, 0, '0.50', 'FE')}\n${atom('O', 1, 0, 0, '', '').slice(0, 54)}\n`;
    const [s] = readPdb(text, 'o.pdb');
    expect(Array.from(s.occupancy)).toEqual([0.5, 1]);
    expect(s.species).toEqual(['Fe', 'O']);
  });

  it('treats the placeholder cell 1 1 1 90 90 90 as no lattice, and warns for a space group other than P 1', () => {
    const placeholder = 'CRYST1    1.000    1.000    1.000  90.00  90.00  90.00 P 1           1';
    expect(readPdb(`${placeholder}\n${atom('FE', 0, 0, 0, '1.00', 'FE')}\n`, 'p.pdb')[0].lattice).toBeNull();
    const monoclinic = 'CRYST1   10.000   12.000   14.000  90.00 100.00  90.00 P 1 21 1      2';
    const [s] = readPdb(`${monoclinic}\n${atom('FE', 0, 0, 0, '1.00', 'FE')}\n`, 'm.pdb');
    expect(s.lattice).not.toBeNull();
    expect(s.info.extra?.warning).toMatch(/asymmetric unit/);
    // beta = 100 degrees: c vector = c (cos beta, 0, sin beta) in the conventional orientation (ITA Vol. B 1.1)
    expect(s.lattice![6]).toBeCloseTo(14 * Math.cos((100 * Math.PI) / 180), 12);
  });

  it('stops at END and ignores other records', () => {
    const text = `HEADER    TEST\nREMARK   1 X\n${atom('FE', 0, 0, 0, '1.00', 'FE')}\nTER\nEND\n${atom('FE', 0, 0, 0, '1.00', 'FE').replace('0.000  1.00', '  abc  1.00')}\n`;
    expect(readPdb(text, 'e.pdb')[0].species).toEqual(['Fe']);
  });

  it('gives file, line and field for bad coordinates, occupancies, elements, cells and models', () => {
    const good = atom('FE', 0, 0, 0, '1.00', 'FE');
    const cases: [string, number, string | undefined][] = [
      [`${good}\n${good.slice(0, 38)}   abc  ${good.slice(46)}\n`, 2, 'y'],
      [`${good}\n${good.slice(0, 54)}  1.50${good.slice(60)}\n`, 2, 'occupancy'],
      [`${good.slice(0, 76)}XX\n`, 1, 'element'],
      [`${good.slice(0, 76)}C1\n`, 1, 'element'],
      ['CRYST1   10.000   abcdef   14.000  90.00  90.00  90.00 P 1           1\n' + good, 1, 'b'],
      ['CRYST1   10.000   10.000   10.000 120.00 120.00 120.00 P 1           1\n' + good, 1, 'alpha'],
      [`MODEL        1\n${good}\n`, 2, undefined],
      [`${good}\nENDMDL\n`, 2, undefined],
      [`MODEL        1\n${good}\nMODEL        2\n`, 3, undefined],
      ['REMARK nothing\n', 1, undefined],
    ];
    for (const [text, line, key] of cases) {
      const e = errorOf(() => readPdb(text, 'e.pdb'));
      expect(e.file).toBe('e.pdb');
      expect([e.line, e.key]).toEqual([line, key]);
    }
  });

  it('sniffs PDB text and not CIF', () => {
    expect(PDB_FORMAT.sniff(readFileSync(`${FIXTURES}znse.pdb`, 'utf8'))).toBe(true);
    expect(PDB_FORMAT.sniff(readFileSync(`${FIXTURES}cu-p1.cif`, 'utf8'))).toBe(false);
  });
});
