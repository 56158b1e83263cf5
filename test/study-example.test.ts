/**
 * The complete example study of the README (test/fixtures/studies/cu-temperature-series.study.yaml)
 * runs as documented: an S0^2 calibration fit of a reference is written by `fit`, read back
 * with `from`, and four temperatures share one Einstein temperature. The data are synthetic
 * (invented, test/fixtures/studies/synthetic.ts), made with the 'parametric' provider the study
 * names (fast; the physics does not matter here).
 */
import { describe, expect, it } from 'vitest';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { einsteinMsrd, reducedMass } from '../src/model/disorder';
import { elementBySymbol } from '../src/elements/index';
import { cli, REPO } from './helpers/cli';
import { CU_STRUCTURE, tempFolder, writeSyntheticCuChi } from './fixtures/studies/synthetic';

const EXAMPLE = join(REPO, 'test/fixtures/studies/cu-temperature-series.study.yaml');
const mu = reducedMass(elementBySymbol('Cu').weight, elementBySymbol('Cu').weight);
// invented truth
const THETA_1 = 240; // K, first shell
const THETA_2 = 200; // K, second shell (fitted per data set in the study)
const EXPANSION = -0.003;
const E0 = 0.8;
const S0SQ = 0.9;

describe('the README example study', () => {
  it('runs: reference fit, s0sq from it, four temperatures with one Einstein temperature', async () => {
    const folder = tempFolder();
    const shellsAt = (t: number) => [
      { n: 12, r: 2.548, msrd: einsteinMsrd(mu, THETA_1, t) },
      { n: 6, r: 3.6149 * (1 + EXPANSION), msrd: einsteinMsrd(mu, THETA_2, t) },
    ];
    // the S0^2 calibration: a reference measured at 20 K, fitted with s0sq free by the fit command
    const reference = writeSyntheticCuChi(folder, 'cu-reference.chi.json', { s0sq: S0SQ, e0: E0, noise: 0.001, seed: 50, shells: shellsAt(20) });
    const ref = await cli(['fit', reference, CU_STRUCTURE, '--absorber', 'Cu', '--s0sq', 'free', '--r', '1.5:3.8', '--provider', 'parametric', '--json', '--out', join(folder, 'cu-reference.fit.json')]);
    expect(ref.code).toBe(0);
    const s0sqRef = JSON.parse(readFileSync(join(folder, 'cu-reference.fit.json'), 'utf8')).params.s0sq.value as number;
    [20, 150, 300, 450].forEach((t, i) => writeSyntheticCuChi(folder, `cu-${t}K.chi.json`, { s0sq: S0SQ, e0: E0, noise: 0.002, seed: 60 + i, shells: shellsAt(t) }));
    const study = readFileSync(EXAMPLE, 'utf8').replace('../structures/cu-p1.cif', CU_STRUCTURE);
    writeFileSync(join(folder, 'cu-temperature-series.study.yaml'), study);

    const run = await cli(['run', join(folder, 'cu-temperature-series.study.yaml'), '--json']);
    expect(run.code, run.stderr).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc.status.converged).toBe(true);
    expect(doc.params.s0sq).toMatchObject({ value: s0sqRef, state: 'fixed' });
    // one Einstein temperature for four data sets: the invented 240 K within 3 reported errors
    expect(Math.abs(doc.params.thetaE.value - THETA_1)).toBeLessThan(3 * doc.params.thetaE.error);
    expect(Math.abs(doc.params.expansion.value - EXPANSION)).toBeLessThan(3 * doc.params.expansion.error);
    // the tied parameter carries its propagated error (equal to r1's, the tie is a shift)
    expect(doc.params.dr1.state).toBe('tied');
    expect(doc.params.dr1.error).toBeCloseTo(doc.params.r1.error, 12);
    // one msrd per data set for Cu.2 (perDataset), rising with temperature as the invented truth does
    const outer = ['cu_20K', 'cu_150K', 'cu_300K', 'cu_450K'].map((d) => doc.params[`msrd_Cu_2_${d}`].value as number);
    for (let i = 1; i < outer.length; i++) expect(outer[i]).toBeGreaterThan(outer[i - 1]);
    expect(doc.datasets.map((d: { name: string }) => d.name)).toEqual(['cu-20K', 'cu-150K', 'cu-300K', 'cu-450K']);
    // the output section: JSON and report beside the study
    expect(existsSync(join(folder, 'cu-series.fit.json'))).toBe(true);
    expect(existsSync(join(folder, 'cu-series-report', 'report.html'))).toBe(true);
  });

  it('--check prints every parameter and shell expression without fitting', async () => {
    const folder = tempFolder();
    writeFileSync(join(folder, 'cu-reference.fit.json'), JSON.stringify({ params: { s0sq: { value: 0.87 } } }));
    [20, 150, 300, 450].forEach((t, i) => writeSyntheticCuChi(folder, `cu-${t}K.chi.json`, { noise: 0.002, seed: i }));
    writeFileSync(join(folder, 's.study.yaml'), readFileSync(EXAMPLE, 'utf8').replace('../structures/cu-p1.cif', CU_STRUCTURE));
    const run = await cli(['run', join(folder, 's.study.yaml'), '--check']);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toMatch(/4 data sets, 11 parameters, 8 free/);
    expect(run.stdout).toMatch(/^s0sq +fixed +0\.87 /m);
    expect(run.stdout).toMatch(/tanh\(\(thetaE\) \/ \(40\)\) \+ \(static1\)/);
    expect(run.stdout).not.toMatch(/warning: parameter dr1/); // a tied parameter kept for its reported value is no mistake
    expect(existsSync(join(folder, 'cu-series.fit.json'))).toBe(false);
  });

  it('the demo study of structures/demo-data loads and expands (parametric provider, --check)', async () => {
    const run = await cli(['run', join(REPO, 'structures/demo-data/ni-spinel-octahedral.study.yaml'), '--check', '--provider', 'parametric']);
    expect(run.code, run.stderr).toBe(0);
    // the outer shells of the octahedral model share one msrd and one expansion factor
    for (const id of ['Al.1', 'O.2', 'Mg.1', 'O.3']) expect(run.stdout).toMatch(new RegExp(`^ni-spinel-sample\\.xdi +${id.replace('.', '\\.')} .*\\(1 \\+ \\(expansion\\)\\) +msrd_outer`, 'm'));
  });
});
