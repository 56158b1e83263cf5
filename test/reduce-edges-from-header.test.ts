/**
 * Edges and scans as the data say: every command that reads a spectrum takes the absorbing
 * element and edge from the file (XDI Element.symbol, Element.edge) when the options are omitted,
 * refuses an option that clashes with the file, and reduces a scan with a short pre-edge (10-20 eV)
 * with a warning that names the range, points and order fitted.
 *
 * Data: public-domain XAS Data Library spectra in test/data/library (test/data/SOURCE.md).
 * Structures: fcc Au, a = 4.0782 Å (room temperature, CRC Handbook of Chemistry and Physics,
 * lattice constants of the elements; from memory), nearest neighbours at a / sqrt(2) = 2.8837 Å,
 * 12 of them; rock-salt MnO, a = 4.445 Å (from memory), Mn-O at a / 2 = 2.2225 Å, 6 of them.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { readScan } from '../src/read/spectrum/index';
import { makeScan } from '../src/read/spectrum/scan';
import { reduceScan, PRE_EDGE_MIN_POINTS } from '../src/reduce/reduce';
import { cli, REPO, TEST_DATA } from './helpers/cli';

const AU = join(TEST_DATA, 'library/Au_Foil_L3_rt_2016Foils.xdi');
const MNO = join(TEST_DATA, 'library/MnO_rt_01.xdi');
const CU = join(TEST_DATA, 'cu_metal_rt.xdi');
const AU_FCC = join(REPO, 'test/fixtures/structures/au-fcc-p1.cif');
const MNO_ROCK_SALT = join(REPO, 'test/fixtures/structures/mno-rocksalt-p1.cif');
const AU_A = 4.0782; // Å, CRC Handbook (from memory)
const AU_R1 = AU_A / Math.SQRT2;
const tmp = () => mkdtempSync(join(tmpdir(), 'shellrank-edges-'));
const oneLine = (text: string) => text.trim().split('\n').length === 1;

describe('reduce takes the element and edge from the XDI header', () => {
  it('Au L3 foil: reduced as Au L3 with no option', async () => {
    const run = await cli(['reduce', AU, '--json']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc.element).toBe('Au');
    expect(doc.edge).toBe('L3');
    // E0 near the tabulated Au L3 edge, 11918.7 eV (xraylib 4.0.0, src/elements/table.ts)
    expect(Math.abs(doc.e0 - 11918.7)).toBeLessThan(5);
  });
  it('an --edge that clashes with Element.edge is a one-line error naming the file and both edges', async () => {
    const run = await cli(['reduce', AU, '--edge', 'K']);
    expect(run.code).toBe(2);
    expect(oneLine(run.stderr)).toBe(true);
    expect(run.stderr).toMatch(/Au_Foil_L3_rt_2016Foils\.xdi: .*\(K\) clashes with the file's Element\.edge L3/);
  });
  it('an --element that clashes with Element.symbol is refused the same way', async () => {
    const run = await cli(['reduce', AU, '--element', 'Pt']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/Au_Foil_L3_rt_2016Foils\.xdi: .*\(Pt\) clashes with the file's Element\.symbol Au/);
  });
  it('an option that agrees with the header is accepted', async () => {
    expect((await cli(['reduce', AU, '--edge', 'L3', '--element', 'Au'])).code).toBe(0);
  });
});

describe('short pre-edge', () => {
  it('MnO (scan starts ~19 eV below the tabulated Mn K edge): reduced, and the warning names the range, points and order fitted', async () => {
    const dir = tmp();
    const out = join(dir, 'mno.chi.json');
    const run = await cli(['reduce', MNO, '--out', out]);
    expect(run.code).toBe(0);
    const doc = JSON.parse(readFileSync(out, 'utf8'));
    const pre = doc.reduction.preEdge;
    // the points between the range ends, counted here from the file itself
    const scan = readScan(MNO);
    const e0 = doc.e0;
    const counted = Array.from(scan.energy).filter((e) => e >= e0 + pre.used[0] && e <= e0 + pre.used[1]).length;
    expect(pre.points).toBe(counted);
    expect(counted).toBeGreaterThanOrEqual(PRE_EDGE_MIN_POINTS);
    expect(pre.used[0]).toBeCloseTo(scan.energy[0] - e0, 1);
    expect(pre.used[1]).toBe(-5); // the gap for Mn K: max(5 eV, 2 x 1.11 eV core-hole width, xraylib 4.0.0)
    const warning = run.stderr.split('\n').find((l) => l.includes('short pre-edge'));
    expect(warning).toBeDefined();
    expect(warning).toContain(`fitted over E0 ${pre.used[0].toFixed(1)} to -5.0 eV (${counted} points)`);
    expect(warning).toContain('(order 1)');
    // the Mn K tabulated edge is 6539 eV (xraylib 4.0.0): the scan starts ~19 eV below it
    expect(6539 - scan.energy[0]).toBeCloseTo(19, 0);
  });
  it('a measured Cu scan cut 12 eV below E0 is reduced with the warning; cut 7 eV below it is refused', () => {
    const cu = readScan(CU);
    const from = (lo: number) => {
      const keep = Array.from(cu.energy.keys()).filter((i) => cu.energy[i] >= lo);
      return makeScan({ energy: keep.map((i) => cu.energy[i]), mu: keep.map((i) => cu.mu[i]), lines: keep.map((i) => cu.lines[i]), info: cu.info });
    };
    // Cu foil E0 = 8980.51 eV with the default reduction (README)
    const kept = reduceScan(from(8968.5)).chi;
    expect(kept.info.warnings.some((w) => /short pre-edge: .* fitted over E0 -1\d\.\d to -5\.0 eV \(\d+ points\)/.test(w))).toBe(true);
    expect(() => reduceScan(from(8973.5))).toThrow(/no pre-edge to fit/);
  });
  it('an explicit --pre-edge that holds no points is still refused, not replaced', () => {
    const scan = readScan(MNO);
    expect(() => reduceScan(scan, { normalisation: { preEdge: [-150, -30] } })).toThrow(/pre-edge range \[-150, -30\] eV from E0 holds 0 points/);
  });
});

describe('fit takes the absorber and edge from the data', () => {
  it('Au L3 foil against fcc Au with no --absorber and no --edge: L3, first shell within 0.02 Å of a/sqrt(2)', async () => {
    const run = await cli(['fit', AU, AU_FCC, '--s0sq', 'free', '--k', '3:12', '--r', '1.8:3.2', '--json']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc.data.edge).toBe('L3');
    expect(doc.structure.absorber).toBe('Au');
    const shell = doc.shells[0];
    expect(shell.n).toBe(12);
    expect(shell.r0).toBeCloseTo(AU_R1, 3);
    expect(Math.abs(shell.r.value - AU_R1)).toBeLessThan(0.02);
    expect(shell.msrd.value).toBeGreaterThan(0);
    expect(Math.abs(doc.params.e0.value)).toBeLessThan(10);
  });
  it('an --edge that clashes with the data is a one-line error naming the file and both edges', async () => {
    const run = await cli(['fit', AU, AU_FCC, '--edge', 'K', '--provider', 'parametric']);
    expect(run.code).toBe(2);
    expect(oneLine(run.stderr)).toBe(true);
    expect(run.stderr).toMatch(/Au_Foil_L3_rt_2016Foils\.xdi: --edge: --edge K clashes with the data's edge L3/);
  });
  it('MnO (short pre-edge, near-edge scan to k = 4.7 1/Å) fits with no edge option and no refusal, and says what the reduction did', async () => {
    const run = await cli(['fit', MNO, MNO_ROCK_SALT, '--k', '2:4.5', '--r', '1:2.6', '--json']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc.data.edge).toBe('K');
    expect(doc.structure.absorber).toBe('Mn');
    expect(doc.shells[0].species).toBe('O');
    expect(doc.shells[0].r0).toBeCloseTo(4.445 / 2, 3);
    expect(run.stderr).toMatch(/warning: .*MnO_rt_01\.xdi: short pre-edge: .*fitted over E0 -\d+\.\d to -5\.0 eV \(\d+ points\)/);
  });
  it('a saved reduction with no edge takes --edge: Au data fitted with L2 tables (2p -> d like L3) also give the first shell within 0.02 Å', async () => {
    const dir = tmp();
    const saved = join(dir, 'au.chi.json');
    expect((await cli(['reduce', AU, '--out', saved])).code).toBe(0);
    const doc = JSON.parse(readFileSync(saved, 'utf8'));
    doc.edge = null;
    writeFileSync(saved, JSON.stringify(doc));
    const run = await cli(['fit', saved, AU_FCC, '--edge', 'L2', '--s0sq', 'free', '--k', '3:12', '--r', '1.8:3.2', '--json']);
    expect(run.code).toBe(0);
    const fit = JSON.parse(run.stdout);
    expect(Math.abs(fit.shells[0].r.value - AU_R1)).toBeLessThan(0.02);
  });
  it('a study file with no absorber and no edge fits the Au L3 foil as Au L3', async () => {
    const dir = tmp();
    const study = join(dir, 'au.study.yaml');
    writeFileSync(study, [
      'parameters:',
      '  s0sq: { value: 0.9, bounds: [0.3, 1.5] }',
      '  e0: { value: 0, bounds: [-15, 15] }',
      'datasets:',
      `  - { data: ${JSON.stringify(AU)}, structure: ${JSON.stringify(AU_FCC)}, k: 3:12, r: 1.8:3.2 }`,
    ].join('\n') + '\n');
    const run = await cli(['run', study, '--json']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc.structure?.absorber ?? doc.datasets?.[0]?.structure?.absorber).toBe('Au');
    expect(doc.data?.edge ?? doc.datasets?.[0]?.data?.edge).toBe('L3');
    expect(Math.abs(doc.shells[0].r.value - AU_R1)).toBeLessThan(0.02);
  });
  it('data that name no element need --absorber', async () => {
    const dir = tmp();
    const file = join(dir, 'no-element.dat');
    const cu = readScan(CU);
    writeFileSync(file, ['energy mu', ...Array.from(cu.energy, (e, i) => `${e} ${cu.mu[i]}`)].join('\n') + '\n');
    const run = await cli(['fit', file, AU_FCC, '--provider', 'parametric']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/no-element\.dat: --absorber: the data do not name the absorbing element/);
  });
});

describe('L1, L2 and L3 edges of Au', () => {
  it('shells: the fcc first shell (12 at a/sqrt(2)) whatever the edge, and the edge reported', async () => {
    for (const edge of ['L1', 'L2', 'L3']) {
      const run = await cli(['shells', AU_FCC, '--absorber', 'Au', '--edge', edge, '--radius', '3.5', '--json']);
      expect(run.code).toBe(0);
      const doc = JSON.parse(run.stdout);
      expect(doc.edge).toBe(edge);
      expect(doc.shells[0].n).toBe(12);
      expect(doc.shells[0].r).toBeCloseTo(AU_R1, 3);
    }
  });
  it('simulate (first principles): L2 and L3 share the 2p -> d final state, L1 (2s -> p) differs (dipole selection rule, common practice)', async () => {
    const chi: Record<string, number[]> = {};
    for (const edge of ['L1', 'L2', 'L3']) {
      const run = await cli(['simulate', AU_FCC, '--absorber', 'Au', '--edge', edge, '--rmax', '3', '--provider', 'firstPrinciples', '--json']);
      expect(run.code).toBe(0);
      const doc = JSON.parse(run.stdout);
      expect(doc.edge).toBe(edge);
      chi[edge] = (doc.k as number[]).map((k, i) => (k >= 3 && k <= 12 ? doc.chi[i] * k * k : 0));
    }
    const correlation = (a: number[], b: number[]) => {
      let ab = 0, aa = 0, bb = 0;
      for (let i = 0; i < a.length; i++) { ab += a[i] * b[i]; aa += a[i] * a[i]; bb += b[i] * b[i]; }
      return ab / Math.sqrt(aa * bb);
    };
    expect(chi.L3.some((x) => x !== 0)).toBe(true);
    expect(correlation(chi.L2, chi.L3)).toBeGreaterThan(0.99);
    expect(correlation(chi.L1, chi.L3)).toBeLessThan(0.9);
  });
  it('rank and screen the Au L3 foil with no --absorber and no --edge', async () => {
    const dir = tmp();
    const bcc = join(dir, 'au-bcc.cif');
    // a bcc Au of the same atomic volume as fcc Au (a_bcc = a_fcc / 2^(1/3)): a wrong candidate
    const aBcc = (AU_A / Math.cbrt(2)).toFixed(4);
    writeFileSync(bcc, readFileSync(AU_FCC, 'utf8').replace(/4\.0782/g, aBcc).replace(/Au1 Au 0\.0 0\.5 0\.5\nAu1 Au 0\.5 0\.0 0\.5\nAu1 Au 0\.5 0\.5 0\.0/, 'Au1 Au 0.5 0.5 0.5'));
    const rank = await cli(['rank', AU, AU_FCC, bcc, '--k', '3:12', '--workers', '0', '--quiet', '--json']);
    expect(rank.code).toBe(0);
    const ranking = JSON.parse(rank.stdout);
    expect(ranking.settings.edge).toBe('L3');
    expect(ranking.candidates).toHaveLength(2);
    const screen = await cli(['screen', AU, AU_FCC, '--vary', 'strain:-2..2/2', '--k', '3:12', '--workers', '0', '--quiet', '--json']);
    expect(screen.code).toBe(0);
    expect(JSON.parse(screen.stdout).settings.edge).toBe('L3');
    const clash = await cli(['rank', AU, AU_FCC, '--edge', 'K', '--workers', '0', '--quiet']);
    expect(clash.code).toBe(2);
    expect(clash.stderr).toMatch(/Au_Foil_L3_rt_2016Foils\.xdi: --edge: --edge K clashes with the data's edge L3/);
  });
});
