/**
 * Plain/CSV column reader and the Scan factory: header lines, delimiters, units, column roles,
 * mu formulas (Beer-Lambert ln(I0/It) and If/I0; common practice, no source), energy-unit
 * detection, and every table problem the issue lists (energies not increasing, repeated energies,
 * NaN or text, zero or negative intensities under a logarithm) as a one-line InputError naming
 * the data line. Plus a property test over random and truncated tables.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors';
import { makeScan, parseColumns, readScanText } from '../src/read/spectrum/index';

/** An invented transmission scan: 12 rows, energy in eV, I0 and It positive. */
function table(opts: { sep?: string; header?: string; energyScale?: number; rows?: number } = {}): string {
  const sep = opts.sep ?? '  ';
  const lines = [opts.header ?? ['energy', 'i0', 'itrans'].join(sep)];
  for (let i = 0; i < (opts.rows ?? 12); i++) lines.push([(8900 + 10 * i) * (opts.energyScale ?? 1), 1000 + i, 300 + 2 * i].join(sep));
  return lines.join('\n') + '\n';
}

function inputError(f: () => unknown): InputError {
  try {
    f();
  } catch (e) {
    if (e instanceof InputError) {
      expect(e.message).not.toContain('\n');
      return e;
    }
    throw e;
  }
  throw new Error('expected an InputError');
}

describe('plain and CSV columns', () => {
  it('whitespace columns with a header line: roles from labels, mu = ln(i0/itrans)', () => {
    const scan = readScanText(table(), 'scan.dat');
    expect(scan.info.format).toBe('columns');
    expect(scan.info.roles).toMatchObject({ energy: 'energy', incident: 'i0', transmitted: 'itrans' });
    expect(scan.info.muFormula).toBe('ln(i0/itrans)');
    expect(scan.mu[0]).toBeCloseTo(Math.log(1000 / 300), 14);
    expect(scan.lines[0]).toBe(2);
  });
  it('CSV with units in parentheses and comment lines', () => {
    const text = '# invented test data\n' + table({ sep: ',', header: 'Energy (eV),I0,It' });
    const doc = parseColumns(text, 'scan.csv');
    expect(doc.delimiter).toBe('comma');
    expect(doc.labels).toEqual(['Energy', 'I0', 'It']);
    expect(doc.units[0]).toBe('eV');
    expect(doc.comments).toBe('invented test data');
    const scan = readScanText(text, 'scan.csv');
    expect(scan.info.energyAxis).toMatchObject({ unit: 'eV', source: 'column unit' });
  });
  it('a header given as the last comment line', () => {
    const text = '# sample: invented\n# energy i0 ifluor\n8900 100 5\n8910 100 6\n8920 100 7\n8930 100 8\n8940 100 9\n8950 100 10\n8960 100 11\n8970 100 12\n';
    const scan = readScanText(text, 'fl.txt');
    expect(scan.info.signal).toBe('fluorescence');
    expect(scan.info.muFormula).toBe('ifluor/i0');
    expect(scan.mu[0]).toBeCloseTo(0.05, 15);
  });
  it('energies in keV are detected from the values and converted (reported)', () => {
    const scan = readScanText(table({ header: 'E i0 it', energyScale: 0.001 }), 'kev.dat');
    expect(scan.info.energyAxis).toMatchObject({ unit: 'keV', source: 'values' });
    expect(scan.energy[0]).toBeCloseTo(8900, 9);
  });
  it('energies in keV are taken from the label', () => {
    const scan = readScanText(table({ header: 'energy_keV i0 it', energyScale: 0.001 }), 'kev.dat');
    expect(scan.info.energyAxis).toMatchObject({ unit: 'keV', source: 'label' });
  });
  it('column roles given as options win over labels', () => {
    const text = table({ header: 'a b c' });
    const scan = readScanText(text, 'x.dat', { columns: { energy: 'a', incident: 2, transmitted: 'c' } });
    expect(scan.info.roles).toMatchObject({ energy: 'a', incident: 'b', transmitted: 'c' });
    const e = inputError(() => readScanText(text, 'x.dat', { columns: { energy: 'a', incident: 'nope' } }));
    expect(e.message).toMatch(/no column named 'nope'/);
  });
  it('a scan that runs downward in energy is reversed, with a warning', () => {
    const rows = table().trim().split('\n');
    const text = [rows[0], ...rows.slice(1).reverse()].join('\n');
    const scan = readScanText(text, 'down.dat');
    expect(scan.energy[1]).toBeGreaterThan(scan.energy[0]);
    expect(scan.info.warnings.join(' ')).toMatch(/reversed/);
    expect(scan.lines[0]).toBe(13);
  });
});

describe('bad tables give one-line errors naming the data line', () => {
  const rows = () => table().trim().split('\n');
  it('energies not increasing', () => {
    const r = rows();
    [r[5], r[6]] = [r[6], r[5]];
    const e = inputError(() => readScanText(r.join('\n'), 'order.dat'));
    expect(e.line).toBe(7);
    expect(e.message).toMatch(/energies must increase/);
  });
  it('a repeated energy', () => {
    const r = rows();
    r[6] = r[5];
    const e = inputError(() => readScanText(r.join('\n'), 'repeat.dat'));
    expect(e.line).toBe(7);
    expect(e.message).toMatch(/8940 eV repeats the energy of line 6/);
  });
  it('NaN in the table', () => {
    const r = rows();
    r[3] = r[3].replace(/\S+$/, 'NaN');
    const e = inputError(() => readScanText(r.join('\n'), 'nan.dat'));
    expect([e.line, e.message]).toEqual([4, expect.stringMatching(/column 3: 'NaN'/)]);
  });
  it('text in the table', () => {
    const r = rows();
    r[4] = r[4].replace(/^\S+/, 'oops');
    const e = inputError(() => readScanText(r.join('\n'), 'text.dat'));
    expect([e.line, e.message]).toEqual([5, expect.stringMatching(/column 1: 'oops' is not a number/)]);
  });
  it('a zero intensity under the logarithm', () => {
    const r = rows();
    r[8] = r[8].replace(/\S+$/, '0');
    const e = inputError(() => readScanText(r.join('\n'), 'zero.dat'));
    expect([e.line, e.message]).toEqual([9, expect.stringMatching(/itrans is 0; ln\(i0\/itrans\) needs positive/)]);
  });
  it('a negative intensity under the logarithm', () => {
    const r = rows();
    r[2] = r[2].replace(/^(\S+\s+)\S+/, '$1-5');
    const e = inputError(() => readScanText(r.join('\n'), 'neg.dat'));
    expect([e.line, e.message]).toEqual([3, expect.stringMatching(/i0 is -5/)]);
  });
  it('a ragged row', () => {
    const r = rows();
    r[3] += ' 7';
    expect(inputError(() => readScanText(r.join('\n'), 'ragged.dat')).line).toBe(4);
  });
  it('no columns to make mu from', () => {
    const e = inputError(() => readScanText(table({ header: 'energy foo bar' }), 'roles.dat'));
    expect(e.message).toMatch(/cannot form mu/);
  });
  it('a header with the wrong number of names', () => {
    expect(inputError(() => readScanText(table({ header: 'energy i0' }), 'h.dat')).line).toBe(1);
  });
  it('an empty file', () => {
    expect(inputError(() => readScanText('', 'empty.dat')).message).toMatch(/no data table/);
  });
});

describe('Scan factory', () => {
  it('checks lengths, naming both', () => {
    expect(() => makeScan({ energy: [1, 2, 3, 4, 5, 6, 7, 8], mu: [1, 2] })).toThrow(/mu has 2 values but energy has 8/);
  });
  it('is frozen and copies its input', () => {
    const energy = [1, 2, 3, 4, 5, 6, 7, 8];
    const scan = makeScan({ energy, mu: energy });
    energy[0] = 99;
    expect(scan.energy[0]).toBe(1);
    expect(Object.isFrozen(scan)).toBe(true);
    expect(Object.isFrozen(scan.info)).toBe(true);
  });
});

describe('column reader properties (fast-check)', () => {
  const base = table({ rows: 10 });
  const check = (text: string) => {
    try {
      readScanText(text, 'prop.dat', { format: 'columns' });
    } catch (e) {
      if (!(e instanceof InputError)) throw e;
      expect(e.file).toBe('prop.dat');
      expect(e.message).not.toContain('\n');
    }
  };
  it('truncated tables give a scan or an InputError naming the file', () => {
    fc.assert(fc.property(fc.integer({ min: 0, max: base.length }), (cut) => check(base.slice(0, cut))), { seed: 11, numRuns: 300 });
  });
  it('random tables of tokens give a scan or an InputError naming the file', () => {
    const token = fc.constantFrom('1', '-2.5', '1e3', 'nan', 'x', ',', '0', '8900', '#', '');
    const line = fc.array(token, { maxLength: 5 }).map((t) => t.join(' '));
    fc.assert(fc.property(fc.array(line, { maxLength: 15 }), (lines) => check(lines.join('\n'))), { seed: 12, numRuns: 500 });
  });
});
