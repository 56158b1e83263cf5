import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { InputError } from '../src/core/errors';
import { invertCell, type Structure } from '../src/structure/structure';
import {
  CIF_FORMAT, parseCifBlocks, parseCifNumber, parseSymmetryOperation, readCif, writeCif, type SymmetryOperation,
} from '../src/read/structure/cif';
import { errorOf } from './helpers/errors';

const FIXTURES = new URL('./fixtures/structures/', import.meta.url).pathname;
const read = (name: string): Structure => readCif(readFileSync(`${FIXTURES}${name}`, 'utf8'), name)[0];


/** Fractional coordinates wrapped into [0, 1), as "Sym u v w" rows sorted, rounded to 1e-4. */
function sortedFractional(s: Structure): string[] {
  const inverse = invertCell(s.lattice!);
  const rows: string[] = [];
  const p = s.positions;
  for (let i = 0; i < s.species.length; i++) {
    const f = [0, 1, 2].map((j) => {
      const v = p[3 * i] * inverse[j] + p[3 * i + 1] * inverse[3 + j] + p[3 * i + 2] * inverse[6 + j];
      const w = v - Math.floor(v + 1e-7); // wrap, mapping 0.99999999 to 0
      return (Math.round(w * 1e4) / 1e4 + 0).toFixed(4);
    });
    rows.push(`${s.species[i]} ${f.join(' ')}`);
  }
  return rows.sort();
}

describe('CIF syntax', () => {
  it('reads loops, quotes that contain quotes, semicolon text fields, comments and DDL2 tags', () => {
    const text = [
      '#\\#CIF_1.1', 'data_first', "_publ_section_title", ';', "a title; with 'quotes'", ';',
      "_chemical_name_common 'O'Neil's salt' # comment", '_cell.length_a 3.0', 'loop_', '_x', '_y', '1 2', "'3 4' \"5\"",
      'data_second', '_z ?',
    ].join('\n');
    const blocks = parseCifBlocks(text, 't.cif');
    expect(blocks.map((b) => b.name)).toEqual(['first', 'second']);
    expect(blocks[0].columns.get('_publ_section_title')![0].text).toBe("a title; with 'quotes'");
    expect(blocks[0].columns.get('_chemical_name_common')![0].text).toBe("O'Neil's salt");
    expect(blocks[0].columns.get('_cell_length_a')![0].text).toBe('3.0');
    expect(blocks[0].columns.get('_x')!.map((v) => v.text)).toEqual(['1', '3 4']);
    expect(blocks[0].columns.get('_y')!.map((v) => [v.text, v.line])).toEqual([['2', 12], ['5', 13]]);
    expect(blocks[1].columns.get('_z')![0]).toMatchObject({ text: '?', quoted: false });
  });

  it('gives file and line for syntax errors', () => {
    const cases: [string, number][] = [
      ['data_a\n_x 1\n_y', 3], // tag without value
      ['data_a\nloop_\n_x\n_y\n1 2\n3\n', 6], // loop not filled
      ["data_a\n_x 'open\n", 2], // unterminated quote
      ['data_a\n_x\n;never closed\n', 3], // text field
      ['_x 1\n', 1], // before any block
      ['data_a\n_x 1\n_X 2\n', 3], // duplicate tag (tags are case-insensitive)
      ['data_a\n1\n', 2], // value without tag
    ];
    for (const [text, line] of cases) {
      const e = errorOf(() => parseCifBlocks(text, 's.cif'));
      expect(e.file).toBe('s.cif');
      expect(e.line).toBe(line);
    }
  });

  it('drops standard uncertainties in parentheses and reads fractions', () => {
    // syntax example of the brief: 3.6149(2) -> 3.6149 (CIF 1.1 numeric values with su)
    expect(parseCifNumber('3.6149(2)')).toBe(3.6149);
    expect(parseCifNumber('-0.25(13)')).toBe(-0.25);
    expect(parseCifNumber('1.2e-3(4)')).toBe(1.2e-3);
    expect(parseCifNumber('1/3')).toBeCloseTo(1 / 3, 15);
    expect(parseCifNumber('3.6(')).toBeNaN();
    expect(parseCifNumber('3.6(a)')).toBeNaN();
    expect(parseCifNumber('?')).toBeNaN();
  });
});

describe('symmetry operator strings', () => {
  const matrix = (op: SymmetryOperation | string) => {
    if (typeof op === 'string') throw new Error(op);
    return [Array.from(op.rotation), Array.from(op.translation)];
  };

  it('reads "-x+1/2, y, -z+3/4"', () => {
    // hand-derived: x' = -x + 1/2, y' = y, z' = -z + 3/4
    expect(matrix(parseSymmetryOperation('-x+1/2, y, -z+3/4'))).toEqual([[-1, 0, 0, 0, 1, 0, 0, 0, -1], [0.5, 0, 0.75]]);
  });

  it('reads "x-y,x,z+1/6" and constants written first or as decimals', () => {
    expect(matrix(parseSymmetryOperation('x-y,x,z+1/6'))).toEqual([[1, -1, 0, 1, 0, 0, 0, 0, 1], [0, 0, 1 / 6]]);
    expect(matrix(parseSymmetryOperation('1/2+X, 0.5-Y, 1/3-z+1/2'))).toEqual([[1, 0, 0, 0, -1, 0, 0, 0, -1], [0.5, 0.5, 1 / 3 + 1 / 2]]);
  });

  it('rejects strings that are not operations', () => {
    for (const bad of ['x,y', 'x,y,z,1', 'x,,z', 'x,y,q', 'x,x,z', '2x,y,z', 'x,y,z+1/0']) {
      expect(typeof parseSymmetryOperation(bad)).toBe('string');
    }
  });
});

describe('readCif: symmetry expansion against P 1', () => {
  it('expands Cu 4a with the 192 Fm-3m operators to the 4 atoms of the P 1 file', () => {
    const expanded = read('cu-fm3m.cif');
    const p1 = read('cu-p1.cif');
    expect(expanded.species).toHaveLength(4);
    expect(sortedFractional(expanded)).toEqual(sortedFractional(p1));
    expect(expanded.labels).toEqual(['Cu1', 'Cu1', 'Cu1', 'Cu1']);
    expect(expanded.info.extra?.warning).toBeUndefined(); // multiplicity 4 matches
    expect(Array.from(expanded.lattice!).map((v) => +v.toFixed(12))).toEqual([3.6149, 0, 0, 0, 3.6149, 0, 0, 0, 3.6149]);
  });

  it('takes NaCl elements from the labels and gives 4 Na + 4 Cl', () => {
    const s = read('nacl-fm3m.cif');
    expect(s.species.filter((x) => x === 'Na')).toHaveLength(4);
    expect(s.species.filter((x) => x === 'Cl')).toHaveLength(4);
    expect(s.info.extra?.warning).toBeUndefined();
  });

  it('expands corundum to 12 Al + 18 O, matching the Wyckoff multiplicities 12c and 18e', () => {
    // multiplicities of R-3c (No. 167) hexagonal axes, 12c and 18e: International Tables Vol. A (from memory),
    // also written in the fixture as _atom_site_symmetry_multiplicity, which the reader checks
    const s = read('corundum-r3c.cif');
    expect(s.species.filter((x) => x === 'Al')).toHaveLength(12);
    expect(s.species.filter((x) => x === 'O')).toHaveLength(18);
    expect(s.info.extra?.warning).toBeUndefined();
    expect(new Set(s.labels)).toEqual(new Set(['Al1', 'O1']));
    expect(s.info.extra?.spaceGroup).toBe('R -3 c H');
  });

  it('gives the same atoms after writing corundum in P 1 and reading it back', () => {
    const s = read('corundum-r3c.cif');
    const again = readCif(writeCif(s), 'p1.cif')[0];
    expect(sortedFractional(again)).toEqual(sortedFractional(s));
    expect(again.labels).toEqual(s.labels);
    for (let k = 0; k < 9; k++) expect(again.lattice![k]).toBeCloseTo(s.lattice![k], 10);
  });

  it('shortest Al-O distances of corundum are about 1.86 and 1.97 Å', () => {
    // Al-O distances 1.85-1.86 and 1.97 Å in corundum (from memory, e.g. Lewis et al., Acta Cryst. A38, 733 (1982))
    const s = read('corundum-r3c.cif');
    const L = s.lattice!;
    const p = s.positions;
    const al = s.species.indexOf('Al');
    const distances: number[] = [];
    for (let j = 0; j < s.species.length; j++) {
      if (s.species[j] !== 'O') continue;
      for (let a = -1; a <= 1; a++) for (let b = -1; b <= 1; b++) for (let c = -1; c <= 1; c++) {
        const d = [0, 1, 2].map((k) => p[3 * j + k] + a * L[k] + b * L[3 + k] + c * L[6 + k] - p[3 * al + k]);
        distances.push(Math.hypot(d[0], d[1], d[2]));
      }
    }
    distances.sort((x, y) => x - y);
    expect(distances[0]).toBeCloseTo(1.855, 1);
    expect(distances[2]).toBeCloseTo(1.855, 1);
    expect(distances[3]).toBeCloseTo(1.97, 1);
    expect(distances[5]).toBeCloseTo(1.97, 1);
    expect(distances[6]).toBeGreaterThan(2.5);
  });
});

describe('readCif: data items and errors', () => {
  const head = 'data_t\n_cell_length_a 4\n_cell_length_b 4\n_cell_length_c 4\n';
  const sites = 'loop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_occupancy\n';

  it('reads occupancies with su, "?" as full occupancy, charges in type symbols, and notes defaulted angles', () => {
    const s = readCif(`${head}${sites}Fe1 Fe2+ 0 0 0 0.25(1)\nO1 O2- 0.5 0.5 0.5 ?\n`, 'o.cif')[0];
    expect(s.species).toEqual(['Fe', 'O']);
    expect(Array.from(s.occupancy)).toEqual([0.25, 1]);
    expect(s.info.extra?.note).toMatch(/_cell_angle_alpha absent, taken as 90/);
    expect(s.info.extra?.note).toMatch(/read as P 1/);
  });

  it('merges symmetry images within the tolerance (periodic) and wraps into [0, 1)', () => {
    const ops = "loop_\n_symmetry_equiv_pos_as_xyz\n'x,y,z'\n'-x,-y,-z'\n'x+1,y,z'\n";
    const s = readCif(`${head}${ops}${sites}A1 Cu 0.0004 0 0 1\nA2 Cu 0.25 0.5 -0.1 1\n`, 'm.cif')[0];
    // site 1: (0.0004,0,0) and (-0.0004,0,0) are 0.0008 apart: one atom; site 2: two atoms
    expect(s.species).toHaveLength(3);
    const inverse = invertCell(s.lattice!);
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 3; j++) {
        const f = s.positions[3 * i] * inverse[j] + s.positions[3 * i + 1] * inverse[3 + j] + s.positions[3 * i + 2] * inverse[6 + j];
        expect(f).toBeGreaterThanOrEqual(-1e-12);
        expect(f).toBeLessThan(1);
      }
    }
  });

  it('refuses a space group named without operators, naming the tag and line', () => {
    const e = errorOf(() => readCif(`${head}_symmetry_space_group_name_H-M 'F m -3 m'\n${sites}Cu1 Cu 0 0 0 1\n`, 'g.cif'));
    expect(e.line).toBe(5);
    expect(e.key).toBe('_symmetry_space_group_name_h-m');
    expect(e.reason).toMatch(/no symmetry operators/);
  });

  it('uses the first block with atoms and names the others', () => {
    const s = readCif(`data_empty\n_x 1\n${head.replace('data_t', 'data_atoms')}${sites}Cu1 Cu 0 0 0 1\ndata_later\n_y 2\n`, 'b.cif')[0];
    expect(s.info.title).toBe('atoms');
    expect(s.info.extra?.otherBlocks).toBe('empty later');
  });

  it('gives file, line and tag for bad numbers, missing cells, unknown elements and bad operators', () => {
    const cases: [string, number, string][] = [
      [`${head}${sites}Cu1 Cu 0 zero 0 1\n`, 12, '_atom_site_fract_y'],
      [`${head}${sites}Cu1 Cu 0 ? 0 1\n`, 12, '_atom_site_fract_y'],
      [`${head}${sites}Cu1 Qq 0 0 0 1\n`, 12, '_atom_site_type_symbol'],
      [`${head}${sites}Cu1 Cu 0 0 0 1.5\n`, 12, '_atom_site_occupancy'],
      [`data_t\n_cell_length_a 4\n_cell_length_c 4\n${sites}Cu1 Cu 0 0 0 1\n`, 1, '_cell_length_b'],
      [`${head}_cell_angle_alpha 120\n_cell_angle_beta 120\n_cell_angle_gamma 120\n${sites}Cu1 Cu 0 0 0 1\n`, 7, '_cell_angle_gamma'],
      [`${head}_symmetry_equiv_pos_as_xyz 'x,y'\n${sites}Cu1 Cu 0 0 0 1\n`, 5, '_symmetry_equiv_pos_as_xyz'],
    ];
    for (const [text, line, key] of cases) {
      const e = errorOf(() => readCif(text, 'e.cif'));
      expect(e.file).toBe('e.cif');
      expect([e.line, e.key]).toEqual([line, key]);
    }
    expect(errorOf(() => readCif('data_x\n_a 1\n', 'n.cif')).line).toBe(1);
    expect(errorOf(() => readCif('# nothing\n', 'n.cif')).line).toBe(1);
  });

  it('sniffs CIF text and not XYZ', () => {
    expect(CIF_FORMAT.sniff(readFileSync(`${FIXTURES}cu-p1.cif`, 'utf8'))).toBe(true);
    expect(CIF_FORMAT.sniff(readFileSync(`${FIXTURES}cu13-nacl8.xyz`, 'utf8'))).toBe(false);
  });

  it('refuses to write a structure without a lattice', () => {
    const s = read('cu-p1.cif');
    expect(() => writeCif({ ...s, lattice: null })).toThrow(InputError);
  });
});
