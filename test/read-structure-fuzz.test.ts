/**
 * Property tests (fast-check, fixed seeds) for every structure reader: random text, truncated
 * fixtures and fixtures with one numeric field corrupted must give either valid frames or our
 * InputError carrying the file and a 1-based line, never any other exception.
 */
import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { readFileSync } from 'node:fs';
import { InputError } from '../src/core/errors';
import type { Structure } from '../src/structure/structure';
import { STRUCTURE_FORMATS, readStructureText } from '../src/read/structure/index';

const FIXTURES = new URL('./fixtures/structures/', import.meta.url).pathname;
const FIXTURE_OF: Record<string, string[]> = {
  xyz: ['cu13-nacl8.xyz'],
  extxyz: ['znse-cu.extxyz'],
  cif: ['corundum-r3c.cif', 'nacl-fm3m.cif'],
  pdb: ['znse.pdb', 'cu13-models.pdb'],
};
const FILE = 'fuzzed/input.any';
const RUNS = 300;

/** The property: frames that are valid, or an InputError located in FILE at a line. */
function readsOrFailsCleanly(read: () => Structure[]): boolean {
  let frames: Structure[];
  try {
    frames = read();
  } catch (e) {
    if (!(e instanceof InputError)) throw e;
    if (e.file !== FILE) throw new Error(`InputError without the file: ${e.message}`);
    if (!(Number.isInteger(e.line) && e.line! >= 1)) throw new Error(`InputError without a line: ${e.message}`);
    return true;
  }
  if (frames.length === 0) throw new Error('no frames and no error');
  for (const s of frames) {
    if (s.positions.length !== 3 * s.species.length) throw new Error('ragged frame');
    if (!s.positions.every(Number.isFinite)) throw new Error('non-finite position');
  }
  return true;
}

/** Tokens that reach deep into the four grammars. */
const GRAMMAR_PIECES = [
  '\n', '\r\n', ' ', '  ', '\t', '0', '1', '2', '3', '-1', '0.5', '1e999', '1/2', '3.6(1)', 'x', '-y+1/2', ',', ':',
  'Cu', 'cu', 'O', 'Xx', '29', '"', "'", ';', '#', '=', '{', '}', '?', '.', '(', ')',
  'data_a', 'loop_', 'save_s', 'save_', '_cell_length_a', '_cell_length_b', '_cell_length_c', '_cell_angle_gamma',
  '_atom_site_label', '_atom_site_type_symbol', '_atom_site_fract_x', '_atom_site_fract_y', '_atom_site_fract_z',
  '_atom_site_occupancy', '_symmetry_equiv_pos_as_xyz', '_space_group_name_H-M_alt',
  'Lattice="', 'Lattice=', 'Properties=', 'species:S:1:pos:R:3', ':occ:R:1', 'pbc="T T F"', 'Z:I:1',
  'ATOM  ', 'HETATM', 'CRYST1', 'MODEL ', 'ENDMDL', 'END', '    1.000', '  90.00',
];
const grammarText = fc.array(fc.constantFrom(...GRAMMAR_PIECES), { maxLength: 80 }).map((parts) => parts.join(''));
const anyText = fc.oneof(fc.string({ maxLength: 300 }), fc.string({ unit: 'binary', maxLength: 300 }), grammarText);

/** Replacements for one numeric field. */
const badNumber = fc.oneof(
  fc.constantFrom('', 'abc', 'NaN', 'Infinity', '1e999', '-1e999', '0x1F', '1.2.3', '--1', '1,5', '+', '.', '?', '1/0', '1(', '9'.repeat(400), '-0', '1e-400', '٣'),
  fc.string({ maxLength: 6 }),
  fc.double().map(String),
  fc.integer().map(String),
);

function numericSpans(text: string): [number, number][] {
  const spans: [number, number][] = [];
  const pattern = /[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?/g;
  for (let m = pattern.exec(text); m; m = pattern.exec(text)) spans.push([m.index, m.index + m[0].length]);
  return spans;
}

for (const format of STRUCTURE_FORMATS) {
  describe(`${format.name} reader under random input`, () => {
    const fixtures = FIXTURE_OF[format.name].map((name) => readFileSync(`${FIXTURES}${name}`, 'utf8'));

    it('random text gives frames or an InputError with file and line', () => {
      fc.assert(fc.property(anyText, (text) => readsOrFailsCleanly(() => format.read(text, FILE))), { seed: 20260101, numRuns: RUNS });
    });

    it('a truncated fixture gives frames or an InputError with file and line', () => {
      const arbitrary = fc.integer({ min: 0, max: fixtures.length - 1 }).chain((k) =>
        fc.integer({ min: 0, max: fixtures[k].length }).map((cut) => fixtures[k].slice(0, cut)));
      fc.assert(fc.property(arbitrary, (text) => readsOrFailsCleanly(() => format.read(text, FILE))), { seed: 20260102, numRuns: RUNS });
    });

    it('one corrupted numeric field gives frames or an InputError with file and line', () => {
      const arbitrary = fc.integer({ min: 0, max: fixtures.length - 1 }).chain((k) => {
        const spans = numericSpans(fixtures[k]);
        return fc.tuple(fc.integer({ min: 0, max: spans.length - 1 }), badNumber).map(([s, replacement]) => {
          const [from, to] = spans[s];
          return fixtures[k].slice(0, from) + replacement + fixtures[k].slice(to);
        });
      });
      fc.assert(fc.property(arbitrary, (text) => readsOrFailsCleanly(() => format.read(text, FILE))), { seed: 20260103, numRuns: RUNS });
    });

    it('the front door (detection, then the reader) behaves the same on random and truncated text', () => {
      const truncated = fc.integer({ min: 0, max: fixtures[0].length }).map((cut) => fixtures[0].slice(0, cut));
      fc.assert(fc.property(fc.oneof(anyText, truncated), (text) => readsOrFailsCleanly(() => readStructureText(text, FILE))), { seed: 20260104, numRuns: RUNS });
    });

    it('an unchanged fixture reads without error (the properties above are not vacuous)', () => {
      for (const text of fixtures) expect(format.read(text, FILE).length).toBeGreaterThan(0);
    });
  });
}
