import { describe, it, expect } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { InputError } from '../src/core/errors';
import { invertCell, makeStructure, type Structure } from '../src/structure/structure';
import {
  STRUCTURE_FORMATS, detectStructureFormat, detectStructureFormatWithReason, readStructureFile, readStructureText,
} from '../src/read/structure/index';
import { errorOf } from './helpers/errors';

const FIXTURES = new URL('./fixtures/structures/', import.meta.url).pathname;
const fixture = (name: string) => readFileSync(`${FIXTURES}${name}`, 'utf8');


describe('the structure format registry', () => {
  it('holds extxyz, xyz, cif and pdb with distinct names and extensions', () => {
    expect(STRUCTURE_FORMATS.map((f) => f.name)).toEqual(['extxyz', 'xyz', 'cif', 'pdb']);
    const extensions = STRUCTURE_FORMATS.flatMap((f) => f.extensions);
    expect(new Set(extensions).size).toBe(extensions.length);
  });

  it('detects every fixture by content, whatever its file name', () => {
    const expected: Record<string, string> = {
      'cu13-nacl8.xyz': 'xyz', 'znse-cu.extxyz': 'extxyz', 'cu-fm3m.cif': 'cif', 'corundum-r3c.cif': 'cif',
      'znse.pdb': 'pdb', 'cu13-models.pdb': 'pdb',
    };
    for (const [name, format] of Object.entries(expected)) {
      expect(detectStructureFormatWithReason(fixture(name), 'no-extension')).toMatchObject({ detectedBy: 'content', format: { name: format } });
    }
  });

  it('prefers an explicit name, falls back to the extension, and explains a failure', () => {
    expect(detectStructureFormatWithReason(fixture('cu13-nacl8.xyz'), 'x.cif', 'XYZ').detectedBy).toBe('name');
    expect(detectStructureFormatWithReason('garbage', 'x.pdb')).toMatchObject({ detectedBy: 'extension', format: { name: 'pdb' } });
    expect(detectStructureFormat('garbage', 'x.extxyz').name).toBe('extxyz');
    const unknownName = errorOf(() => detectStructureFormat('', 'x.xyz', 'poscar'));
    expect(unknownName.key).toBe('format');
    expect(unknownName.reason).toMatch(/known: extxyz, xyz, cif, pdb/);
    const neither = errorOf(() => readStructureText('garbage', 'x.dat'));
    expect(neither.file).toBe('x.dat');
    expect(neither.line).toBe(1);
    expect(neither.reason).toMatch(/content matches none.*extension '\.dat'/);
  });

  it('reads files, naming a missing one', () => {
    expect(readStructureFile(`${FIXTURES}cu-p1.cif`)[0].info.file).toBe(`${FIXTURES}cu-p1.cif`);
    expect(errorOf(() => readStructureFile(`${FIXTURES}absent.xyz`)).file).toBe(`${FIXTURES}absent.xyz`);
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-read-'));
    try {
      writeFileSync(join(dir, 'a.txt'), fixture('znse.pdb'));
      expect(readStructureFile(join(dir, 'a.txt'), { format: 'pdb' })[0].species).toHaveLength(8);
    } finally {
      rmSync(dir, { recursive: true });
    }
  });
});

// ---------------------------------------------------------------------------------------------
// Round trip through every format that has a writer

/** Test structures: invented coordinates (no reference values), chosen to exercise each column. */
function samples(): { name: string; structure: Structure }[] {
  const cluster = readStructureText(fixture('cu13-nacl8.xyz'), 'c.xyz')[0];
  const crystal = readStructureText(fixture('znse-cu.extxyz'), 'z.extxyz')[0];
  const triclinic = makeStructure({
    species: ['Fe', 'Ni', 'O'],
    positions: [0.1, 0.2, 0.3, 1.25, 2.5, 3.75, 2.0, 0.5, 1e-7],
    occupancy: [0.5, 0.5, 1],
    labels: ['M1', 'M1', 'O1'],
    // conventional orientation (a along x, b in the xy plane), so a CIF round trip keeps it
    lattice: [4, 0, 0, 0.7, 4.2, 0, 0.4, 0.9, 5.1],
    info: { title: 'mixed site' },
  });
  return [{ name: 'cluster', structure: cluster }, { name: 'crystal', structure: crystal }, { name: 'triclinic', structure: triclinic }];
}

/** Label kept by a format: plain XYZ writes none, so the reader makes species + index. */
const KEEPS_LABELS: Record<string, boolean> = { xyz: false, extxyz: true, cif: true, pdb: true };

function expectSameAtoms(format: string, before: Structure, after: Structure): void {
  expect(after.species).toEqual(before.species);
  expect(Array.from(after.occupancy)).toEqual(Array.from(before.occupancy));
  if (KEEPS_LABELS[format]) expect(after.labels).toEqual(before.labels);
  expect(after.lattice === null).toBe(before.lattice === null);
  if (before.lattice && after.lattice) {
    for (let k = 0; k < 9; k++) expect(after.lattice[k]).toBeCloseTo(before.lattice[k], 9);
    // positions equal modulo lattice vectors (CIF wraps into the cell), compared in fractions
    const inverse = invertCell(before.lattice);
    for (let i = 0; i < before.species.length; i++) {
      for (let j = 0; j < 3; j++) {
        const frac = (s: Structure) => s.positions[3 * i] * inverse[j] + s.positions[3 * i + 1] * inverse[3 + j] + s.positions[3 * i + 2] * inverse[6 + j];
        const d = frac(after) - frac(before);
        expect(Math.abs(d - Math.round(d))).toBeLessThan(1e-10);
      }
    }
  } else {
    for (let k = 0; k < before.positions.length; k++) expect(after.positions[k]).toBeCloseTo(before.positions[k], 10);
  }
}

describe('round trip through every registered writer', () => {
  for (const format of STRUCTURE_FORMATS) {
    if (!format.write) continue;
    it(`${format.name}: read(write(s)) gives the same atoms, or the writer refuses with an InputError`, () => {
      let written = 0;
      for (const { name, structure } of samples()) {
        let text: string;
        try {
          text = format.write!(structure);
        } catch (e) {
          expect(e, `${format.name} on ${name}`).toBeInstanceOf(InputError);
          continue;
        }
        written++;
        expect(format.sniff(text), `${format.name} sniffs its own output`).toBe(true);
        const frames = readStructureText(text, `round-trip.${format.name}`);
        expect(frames).toHaveLength(1);
        expect(frames[0].info.format).toBe(format.name);
        expectSameAtoms(format.name, structure, frames[0]);
      }
      expect(written, `${format.name} wrote at least one sample`).toBeGreaterThan(0);
    });
  }

  it('plain XYZ refuses the periodic samples and CIF refuses the cluster', () => {
    const [cluster, crystal] = samples();
    const xyz = STRUCTURE_FORMATS.find((f) => f.name === 'xyz')!;
    const cif = STRUCTURE_FORMATS.find((f) => f.name === 'cif')!;
    expect(() => xyz.write!(crystal.structure)).toThrow(/cannot hold a lattice/);
    expect(() => cif.write!(cluster.structure)).toThrow(/needs a cell/);
  });
});
