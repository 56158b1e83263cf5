/**
 * `shellrank reduce` end to end on the measured spectra of test/data: summary, JSON, the
 * three output files, merging, and bad input: a one-line error, exit code 2, and no output file
 * (not even a partial or temporary one).
 */
import { mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { chiFromJson } from '../src/reduce/index';
import { TEST_DATA as DATA, cli, cliProcess } from './helpers/cli';

const CU = join(DATA, 'cu_metal_rt.xdi');

describe('shellrank reduce', () => {
  it('prints a summary with E0, the tabulated edge and every range used', async () => {
    const run = await cli(['reduce', CU]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/E0 = 89\d\d\.\d\d eV \(smoothed-derivative maximum/);
    expect(run.stdout).toMatch(/tabulated edge 8978\.9 eV \(xraylib 4\.0\.0\)/);
    expect(run.stdout).toMatch(/pre-edge: E0 -150\.0 to -30\.0 eV, order 1/);
    expect(run.stdout).toMatch(/background: cutoff 1 Å/);
    expect(run.stdout).toMatch(/noise: /);
  });
  it('--json prints the document with e0, edgeStep, k, chi and noise', async () => {
    const run = await cli(['reduce', CU, '--json', '--bkg-cutoff', '1.1']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc).toMatchObject({ e0: expect.any(Number), edgeStep: expect.any(Number), noise: { k: expect.any(Number), r: expect.any(Number) } });
    expect(doc.k.length).toBe(doc.chi.length);
    expect(doc.reduction.background.cutoffR).toBe(1.1);
  });
  it('--out, --xdi-out and --plot write whole files that read back', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-reduce-'));
    const run = await cli(['reduce', CU, '--out', 'cu.json', '--xdi-out', 'cu.xdi', '--plot', 'cu.svg'], dir);
    expect(run.code).toBe(0);
    const chi = chiFromJson(readFileSync(join(dir, 'cu.json'), 'utf8'), 'cu.json');
    expect(chi.element).toBe('Cu');
    expect(readFileSync(join(dir, 'cu.xdi'), 'utf8')).toMatch(/^# XDI\/1\.0/);
    const svg = readFileSync(join(dir, 'cu.svg'), 'utf8');
    expect(svg).toMatch(/^<svg xmlns="http:\/\/www\.w3\.org\/2000\/svg"/);
    for (const label of ['E (eV)', 'k (Å⁻¹)', 'R (Å)', 'background μ0(E)', 'pre-edge line', '|χ(R)|']) expect(svg).toContain(label);
    expect(readdirSync(dir).sort()).toEqual(['cu.json', 'cu.svg', 'cu.xdi']);
  });
  it('several files are aligned and merged, with the shifts reported', async () => {
    const run = await cli(['reduce', CU, CU]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/merged 2 scans/);
    expect(run.stdout).toMatch(/shift 0\.000 eV/);
  });
  it('a malformed file: one line on stderr naming file and data line, exit 2, no output file', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-reduce-'));
    const bad = join(DATA, 'xdi-bad', 'bad_13.xdi');
    const run = await cli(['reduce', bad, '--out', 'x.json', '--plot', 'x.svg'], dir);
    expect(run.code).toBe(2);
    expect(run.stderr.trim().split('\n')).toHaveLength(1);
    expect(run.stderr).toMatch(/bad_13\.xdi:31: data line has 3 values, expected 4/);
    expect(readdirSync(dir)).toEqual([]);
  });
  it('a scan too short for the requested k range: one-line error, no output', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-reduce-'));
    const run = await cli(['reduce', CU, '--k-max', '25', '--out', 'x.json'], dir);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/too few points above the edge/);
    expect(readdirSync(dir)).toEqual([]);
  });
  it('refuses to write over its input', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-reduce-'));
    const copy = join(dir, 'cu.xdi');
    const text = readFileSync(CU, 'utf8');
    writeFileSync(copy, text);
    const run = await cli(['reduce', 'cu.xdi', '--out', 'cu.xdi'], dir);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/refusing to overwrite an input file/);
    expect(readFileSync(copy, 'utf8')).toBe(text);
  });
  it('reader warnings are printed on stderr, one line each', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-reduce-'));
    writeFileSync(join(dir, 'nofacility.xdi'), readFileSync(CU, 'utf8').replace(/^# Facility\.name:.*\n/m, ''));
    const run = await cli(['reduce', 'nofacility.xdi'], dir);
    expect(run.code).toBe(0);
    expect(run.stderr).toMatch(/^shellrank: warning: nofacility\.xdi: recommended field Facility\.name is missing$/m);
  });
  it('a bad option value names the option', async () => {
    const run = await cli(['reduce', CU, '--bkg-cutoff', 'abc']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/--bkg-cutoff: expected a number, got 'abc'/);
  });
  it('the real binary runs it', () => {
    const run = cliProcess(['reduce', CU, '--json']);
    expect(run.code).toBe(0);
    expect(JSON.parse(run.stdout).element).toBe('Cu');
  });
});
