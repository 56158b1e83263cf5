/**
 * The XDI reader against the public-domain XDI example data in test/data: the three measured
 * spectra, and every malformed file of xdi-bad/ behaving as xdi-bad/BadFiles.txt says
 * ("error msg" -> an InputError naming file and line; "file read" -> a document, with the warning
 * BadFiles.txt's notes call for). Plus property tests: truncated or corrupted XDI text gives our
 * InputError naming the file, never another exception.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors';
import { formatXdi, HC_EV_ANGSTROM, parseXdi, readScan, readScanText } from '../src/read/spectrum/index';

const DATA = new URL('./data/', import.meta.url).pathname;
const BAD = join(DATA, 'xdi-bad');

type Expectation =
  | { file: string; status: 'error'; line: number; message: RegExp }
  | { file: string; status: 'read'; warnings: RegExp[]; check?: (doc: ReturnType<typeof parseXdi>) => void };

/** One row per file of xdi-bad/BadFiles.txt; the status column is that file's "status". */
const BAD_FILES: Expectation[] = [
  { file: 'bad_00.xdi', status: 'read', warnings: [] },
  { file: 'bad_01.xdi', status: 'error', line: 1, message: /version line/ },
  { file: 'bad_02.xdi', status: 'read', warnings: [/Element\.edge is missing/] },
  { file: 'bad_03.xdi', status: 'read', warnings: [/Element\.symbol is missing/] },
  { file: 'bad_04.xdi', status: 'read', warnings: [/Element\.edge 'Foo'/] },
  { file: 'bad_05.xdi', status: 'read', warnings: [/Element\.symbol 'Foo'/] },
  { file: 'bad_06.xdi', status: 'read', warnings: [/no header-end line/] },
  // note 2: unspecified labels named (here from the label line, else colN); extra labels ignored
  { file: 'bad_07.xdi', status: 'read', warnings: [/no Column\.N fields/], check: (d) => expect(d.labels).toEqual(['energy', 'i0', 'itrans', 'mutrans']) },
  { file: 'bad_08.xdi', status: 'read', warnings: [/no Column\.N field for column 4/], check: (d) => expect(d.labels).toHaveLength(4) },
  { file: 'bad_09.xdi', status: 'read', warnings: [/Column\.5 names no data column/], check: (d) => expect(d.labels).toEqual(['energy', 'i0', 'itrans', 'mutrans']) },
  { file: 'bad_10.xdi', status: 'read', warnings: [/not continuous/, /Column\.7 names no data column/] },
  // note 3: lines with unrecognised comment characters ignored
  { file: 'bad_11.xdi', status: 'read', warnings: [/unsupported comment character '!'/], check: (d) => expect(d.fields['Beamline.collimation']).toBeUndefined() },
  { file: 'bad_12.xdi', status: 'read', warnings: [/angle but the required field Mono\.d_spacing is missing/] },
  { file: 'bad_13.xdi', status: 'error', line: 31, message: /3 values, expected 4/ },
  { file: 'bad_14.xdi', status: 'error', line: 36, message: /6 values, expected 4/ },
  { file: 'bad_15.xdi', status: 'error', line: 29, message: /'nan'/ },
  { file: 'bad_16.xdi', status: 'error', line: 30, message: /'STRING' is not a number/ },
  { file: 'bad_17.xdi', status: 'error', line: 29, message: /'1\.4\.9' is not a number/ },
  { file: 'bad_18.xdi', status: 'error', line: 8, message: /has no value/ },
  { file: 'bad_19.xdi', status: 'error', line: 8, message: /no ':'/ },
  { file: 'bad_20.xdi', status: 'error', line: 8, message: /no '\.'/ },
  { file: 'bad_21.xdi', status: 'error', line: 8, message: /contains a space/ },
  { file: 'bad_22.xdi', status: 'error', line: 8, message: /more than one '\.'/ },
  // note 4: keys may start with a number
  { file: 'bad_23.xdi', status: 'read', warnings: [], check: (d) => expect(d.fields['Family.00key']).toBe('Value') },
  { file: 'bad_24.xdi', status: 'error', line: 8, message: /family must start with a letter/ },
  // note 5: no extra version -> empty
  { file: 'bad_25.xdi', status: 'read', warnings: [], check: (d) => expect(d.extraVersions).toEqual([]) },
  // note 6: no user comment -> ''
  { file: 'bad_26.xdi', status: 'read', warnings: [], check: (d) => expect(d.comments).toBe('') },
  { file: 'bad_27.xdi', status: 'read', warnings: [], check: (d) => expect(d.comments).toBe('') },
  { file: 'bad_28.xdi', status: 'read', warnings: [/Scan\.start_time '2001-Jun-26 22:27:31'/] },
  { file: 'bad_29.xdi', status: 'read', warnings: [/Scan\.start_time '2001-26-6T22:27:31'/] },
  { file: 'bad_30.xdi', status: 'read', warnings: [/Element\.symbol 'Foo'/, /Element\.edge 'Bar'/] },
  { file: 'bad_31.xdi', status: 'read', warnings: [/Mono\.d_spacing 'three point/] },
  // note 7: missing recommended fields reported
  { file: 'bad_32.xdi', status: 'read', warnings: [/recommended field Facility\.name is missing/, /recommended field Beamline\.name is missing/] },
  { file: 'bad_33.xdi', status: 'read', warnings: [/Sample\.temperature '300\.0a K'/] },
  { file: 'bad_34.xdi', status: 'read', warnings: [/Facility\.energy '7\.00 missing units'/] },
  { file: 'bad_35.xdi', status: 'read', warnings: [/Facility\.current '101x ma'/] },
];

describe('xdi-bad files behave as BadFiles.txt says', () => {
  it('the table covers every file listed in BadFiles.txt', () => {
    const listed = readFileSync(join(BAD, 'BadFiles.txt'), 'utf8').match(/bad_\d\d\.xdi/g) ?? [];
    expect(BAD_FILES.map((b) => b.file).sort()).toEqual([...new Set(listed)].sort());
  });
  for (const row of BAD_FILES) {
    it(`${row.file}: ${row.status === 'error' ? `one-line error at line ${row.line}` : `read${row.warnings.length ? ' with a warning' : ''}`}`, () => {
      const path = join(BAD, row.file);
      const text = readFileSync(path, 'utf8');
      if (row.status === 'error') {
        let caught: unknown;
        try {
          parseXdi(text, path);
        } catch (e) {
          caught = e;
        }
        expect(caught).toBeInstanceOf(InputError);
        const error = caught as InputError;
        expect(error.file).toBe(path);
        expect(error.line).toBe(row.line);
        expect(error.message).toMatch(row.message);
        expect(error.message).not.toContain('\n');
        expect(() => readScan(path)).toThrow(InputError);
        return;
      }
      const doc = parseXdi(text, path);
      const messages = doc.warnings.map((w) => w.message);
      if (row.warnings.length === 0) expect(messages).toEqual([]);
      for (const w of row.warnings) expect(messages.some((m) => w.test(m)), `warning ${w} among ${JSON.stringify(messages)}`).toBe(true);
      row.check?.(doc);
      if (row.file !== 'bad_12.xdi') {
        const scan = readScan(path);
        expect(scan.energy.length).toBe(12);
        expect(scan.info.warnings.length).toBeGreaterThanOrEqual(row.warnings.length);
      }
    });
  }
  it('bad_12.xdi: the angle column needs a d-spacing to become a Scan, then follows Bragg\'s law', () => {
    const path = join(BAD, 'bad_12.xdi');
    expect(() => readScan(path)).toThrow(/d-spacing/);
    const scan = readScan(path, { dSpacing: 3.13553 });
    // Bragg's law E = hc / (2 d sin theta), hc = 12398.419843 eV Å from the exact SI constants (CODATA 2018)
    const theta = (11.6 * Math.PI) / 180; // the file's last angle, the highest energy
    expect(scan.energy[scan.energy.length - 1]).toBeCloseTo(HC_EV_ANGSTROM / (2 * 3.13553 * Math.sin(theta)), 6);
    expect(HC_EV_ANGSTROM).toBeCloseTo(12398.419843, 5); // hc/e, CODATA 2018 exact constants
    // the angle falls through the file, so the energy rises and no reversal is needed
    expect(scan.info.history).toEqual([]);
    expect(scan.energy[1]).toBeGreaterThan(scan.energy[0]);
  });
});

describe('measured XDI spectra read cleanly', () => {
  // Column layouts as the files' own Column.N fields state them.
  const cases = [
    { file: 'cu_metal_rt.xdi', points: 408, element: 'Cu', formula: 'ln(i0/itrans)' },
    { file: 'fe_metal_rt.xdi', points: 348, element: 'Fe', formula: 'mutrans' },
    { file: 'zn_znse_rt.xdi', points: 469, element: 'Zn', formula: 'ln(i0/itrans)' },
  ];
  for (const c of cases) {
    it(`${c.file}: ${c.points} points, ${c.element} K, mu = ${c.formula}, no warnings`, () => {
      const scan = readScan(join(DATA, c.file));
      expect(scan.energy.length).toBe(c.points);
      expect(scan.info.element).toBe(c.element);
      expect(scan.info.edge).toBe('K');
      expect(scan.info.muFormula).toBe(c.formula);
      expect(scan.info.energyAxis).toMatchObject({ unit: 'eV', source: 'column unit' });
      expect(scan.info.warnings).toEqual([]);
      expect(scan.info.sha256).toMatch(/^[0-9a-f]{64}$/);
    });
  }
  it('cu_metal_rt.xdi: ln(i0/itrans) equals the file\'s own mutrans column to its printed precision', () => {
    const scan = readScan(join(DATA, 'cu_metal_rt.xdi'));
    const given = scan.channels.mutrans;
    for (let i = 0; i < scan.mu.length; i++) expect(Math.abs(scan.mu[i] - given[i])).toBeLessThan(1e-6);
  });
});

describe('XDI writer and reader agree', () => {
  it('a written table reads back exactly, with fields and comments', () => {
    const energy = Float64Array.from({ length: 10 }, (_, i) => 8900 + i * 0.1 + 1e-9 * i);
    const mu = energy.map((e) => Math.sin(e) / 3);
    const text = formatXdi({
      fields: { 'Element.symbol': 'Cu', 'Element.edge': 'K', 'Sample.name': 'invented test sample' },
      comments: 'line one\nline two',
      labels: ['energy', 'mutrans'],
      units: ['eV', null],
      columns: [energy, mu],
    });
    const doc = parseXdi(text, 'memory.xdi');
    expect(doc.labels).toEqual(['energy', 'mutrans']);
    expect(doc.units).toEqual(['eV', null]);
    expect(Array.from(doc.table.columns[0])).toEqual(Array.from(energy));
    expect(Array.from(doc.table.columns[1])).toEqual(Array.from(mu));
    expect(doc.fields['Sample.name']).toBe('invented test sample');
    expect(doc.comments).toBe('line one\nline two');
  });
});

describe('XDI reader properties (fast-check)', () => {
  const base = [
    '# XDI/1.0 Test/0.1',
    '# Column.1: energy eV',
    '# Column.2: i0',
    '# Column.3: itrans',
    '# Element.symbol: Cu',
    '# Element.edge: K',
    '# ///',
    '# invented test data',
    '#----',
    '# energy i0 itrans',
    ...Array.from({ length: 12 }, (_, i) => `${8900 + 10 * i} ${1000 + i} ${400 - i}`),
  ].join('\n');

  function outcome(text: string): 'ok' | 'input-error' {
    try {
      readScanText(text, 'prop.xdi', { format: 'xdi' });
      return 'ok';
    } catch (e) {
      if (!(e instanceof InputError)) throw e;
      expect(e.file).toBe('prop.xdi');
      expect(e.message).not.toContain('\n');
      return 'input-error';
    }
  }

  it('any truncation gives a scan or an InputError naming the file', () => {
    fc.assert(fc.property(fc.integer({ min: 0, max: base.length }), (cut) => void outcome(base.slice(0, cut))), { seed: 4, numRuns: 300 });
  });
  it('any single-character corruption gives a scan or an InputError naming the file', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: base.length - 1 }), fc.constantFrom('x', ':', '.', '#', ' ', '\n', '-', '/', 'e', '0', 'nan'), (at, ch) =>
        void outcome(base.slice(0, at) + ch + base.slice(at + 1)),
      ),
      { seed: 5, numRuns: 500 },
    );
  });
  it('random text after the version line gives a scan or an InputError', () => {
    fc.assert(fc.property(fc.string({ maxLength: 200 }), (junk) => void outcome(`# XDI/1.0\n${junk}`)), { seed: 6, numRuns: 300 });
  });
  it('a corrupted number in the table is reported at its data line', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 11 }), fc.constantFrom('abc', '1.2.3', 'nan', 'inf', '--1'), (row, bad) => {
        const lines = base.split('\n');
        const index = 10 + row;
        lines[index] = lines[index].replace(/^\S+/, bad);
        try {
          parseXdi(lines.join('\n'), 'prop.xdi');
          return false;
        } catch (e) {
          return e instanceof InputError && e.line === index + 1;
        }
      }),
      { seed: 7, numRuns: 100 },
    );
  });
});
