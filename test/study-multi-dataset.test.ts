/**
 * Several data sets in one study sharing parameters: a temperature series whose msrd follows an
 * Einstein model with one fitted Einstein temperature, and the same chi(k) at two k-weights.
 * Synthetic data (invented, see test/fixtures/studies/synthetic.ts) made with the 'parametric'
 * provider, which is fast and enough here: these tests check the study machinery (sharing,
 * the einstein expansion), not scattering physics.
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { writeFileSync } from 'node:fs';
import { parseStudyText } from '../src/fit/study/load';
import { prepareStudy } from '../src/fit/study/compile';
import { runStudy, studyDocument } from '../src/fit/study/run';
import { defaultProviders } from '../src/scatter/registry';
import { einsteinMsrd, reducedMass } from '../src/model/disorder';
import { elementBySymbol } from '../src/elements/index';
import { HBAR2_OVER_KB_AMU_A2_K } from '../src/core/constants';
import { hasPythonModules, runPython } from './helpers/python';
import { CU_STRUCTURE, tempFolder, writeSyntheticCuChi } from './fixtures/studies/synthetic';

const providers = defaultProviders({ cache: false });
const cuMass = elementBySymbol('Cu').weight;
const muCuCu = reducedMass(cuMass, cuMass);

/** The invented truth of the temperature series. */
const THETA_E = 240; // K
const TEMPERATURES = [20, 150, 300, 450]; // K
const R_TRUE = 2.548;
const E0_TRUE = 1.2;

function seriesStudy(folder: string, files: string[]): string {
  return [
    'title: Cu first shell at four temperatures, one Einstein temperature (synthetic)',
    'provider: parametric',
    'parameters:',
    '  s0sq: 0.9',
    '  e0: { value: 0, bounds: [-10, 10] }',
    '  thetaE: { value: 350, bounds: [50, 2000] }   # K',
    '  r1: { value: 2.556, bounds: [2.4, 2.7] }',
    'defaults:',
    `  structure: ${CU_STRUCTURE}`,
    '  absorber: Cu',
    '  r: 1.5:3',
    '  shells:',
    '    - include: Cu.1',
    '      r: r1',
    '      msrd: { einstein: thetaE }',
    'datasets:',
    ...files.map((f, i) => `  - { data: ${f}, temperature: ${TEMPERATURES[i]} }`),
    '',
  ].join('\n');
}

function makeSeries(folder: string, noise: number, seed: number): string[] {
  return TEMPERATURES.map((t, i) => {
    const name = `cu-${t}K.chi.json`;
    writeSyntheticCuChi(folder, name, {
      e0: E0_TRUE, noise, seed: seed * 100 + i,
      shells: [{ n: 12, r: R_TRUE, msrd: einsteinMsrd(muCuCu, THETA_E, t) }],
    });
    return name;
  });
}

function fitSeries(noise: number, seed: number) {
  const folder = tempFolder();
  const files = makeSeries(folder, noise, seed);
  const study = parseStudyText(seriesStudy(folder, files), join(folder, 'series.study.yaml'), folder);
  const prepared = prepareStudy(study, { providers });
  return { prepared, result: runStudy(prepared) };
}

describe('einstein shorthand', () => {
  it('expands to hbar^2/(2 mu k_B thetaE) coth(thetaE/2T) with the pair mass and the data set temperature (tolerance 1e-12 relative)', () => {
    const folder = tempFolder();
    const files = makeSeries(folder, 0, 1);
    const study = parseStudyText(seriesStudy(folder, files), join(folder, 'series.study.yaml'), folder);
    const prepared = prepareStudy(study, { providers });
    const set = prepared.problem.parameters;
    // evaluate every data set's msrd at thetaE = 300 K (free vector: e0, thetaE, r1)
    const values = set.values(Float64Array.of(0, 300, 2.55));
    prepared.datasets.forEach((ds, di) => {
      const msrd = values[set.indexOf(`_d${di}_p0_msrd`)];
      // closed form with hbar^2/(k_B amu) = 48.508 Å^2 K (CODATA 2018, src/core/constants.ts) and
      // coth x = 1/tanh x; independent of einsteinMsrd's code path
      const T = TEMPERATURES[di];
      const expected = (HBAR2_OVER_KB_AMU_A2_K / (2 * muCuCu * 300)) / Math.tanh(300 / (2 * T));
      expect(Math.abs(msrd / expected - 1)).toBeLessThan(1e-12);
      expect(Math.abs(msrd / einsteinMsrd(muCuCu, 300, T) - 1)).toBeLessThan(1e-12);
    });
  });
  it.skipIf(!hasPythonModules('scipy.constants'))('uses hbar^2/(k_B amu) = 48.5087 Å^2 K as scipy.constants (CODATA 2018) gives it (tolerance 1e-8 relative; skipped without python3-scipy)', () => {
    const reference = runPython<number>('import json, scipy.constants as c; print(json.dumps(c.hbar**2 / (c.k * c.atomic_mass) * 1e20))');
    expect(Math.abs(HBAR2_OVER_KB_AMU_A2_K / reference - 1)).toBeLessThan(1e-8);
  });
});

describe('temperature series sharing one Einstein temperature (synthetic, parametric provider)', () => {
  it('recovers thetaE, r and e0 from noise-free data (tolerance 1e-6 relative)', () => {
    const { result } = fitSeries(0, 1);
    expect(result.status.converged).toBe(true);
    expect(Math.abs(result.params.thetaE.value / THETA_E - 1)).toBeLessThan(1e-6);
    expect(Math.abs(result.params.r1.value - R_TRUE)).toBeLessThan(1e-6);
    expect(Math.abs(result.params.e0.value - E0_TRUE)).toBeLessThan(1e-5);
    expect(result.shells).toHaveLength(TEMPERATURES.length);
    expect(new Set(result.shells.map((s) => s.dataset)).size).toBe(TEMPERATURES.length);
  });

  // One Einstein temperature from four noisy data sets: the truth should lie within the reported
  // 1-sigma error in about 68 % of seeds; we ask for >= 55 % of 20 seeds and every seed within
  // 3 sigma (a binomial 68 % over 20 trials falls below 55 % with probability about 0.1; seeds fixed).
  it('puts the true Einstein temperature inside its reported error in most of 20 noisy series', () => {
    let within = 0;
    const seeds = 20;
    for (let seed = 1; seed <= seeds; seed++) {
      const { result } = fitSeries(0.002, seed);
      expect(result.status.converged).toBe(true);
      const p = result.params.thetaE;
      expect(p.error).toBeGreaterThan(0);
      expect(Math.abs(p.value - THETA_E)).toBeLessThan(3 * p.error);
      if (Math.abs(p.value - THETA_E) <= p.error) within++;
    }
    expect(within / seeds).toBeGreaterThanOrEqual(0.55);
  });

  it('writes one shell per data set, each with the data set name, and per-data-set curves in the document', () => {
    const { prepared, result } = fitSeries(0.002, 3);
    const doc = studyDocument(result, prepared);
    expect(doc.datasets.map((d) => d.settings.temperature)).toEqual(TEMPERATURES);
    expect(doc.shells.map((s) => s.dataset)).toEqual(TEMPERATURES.map((t) => `cu-${t}K.chi.json`));
    expect(doc.datasetCurves).toHaveLength(TEMPERATURES.length);
    // msrd rises with temperature, as the model says
    const msrd = doc.shells.map((s) => s.msrd.value);
    for (let i = 1; i < msrd.length; i++) expect(msrd[i]).toBeGreaterThan(msrd[i - 1]);
  });
});

describe('the same chi(k) as two data sets at two k-weights (synthetic, parametric provider)', () => {
  it('gives the parameters of one data set fitted at both k-weights (tolerance 1e-9) and warns that the data are counted twice', () => {
    const folder = tempFolder();
    writeSyntheticCuChi(folder, 'cu.chi.json', { noise: 0.002, seed: 7, shells: [{ n: 12, r: 2.55, msrd: 0.0085 }] });
    const head = [
      'provider: parametric',
      'parameters:',
      '  s0sq: { value: 0.9, bounds: [0.3, 1.5] }',
      'defaults:',
      '  data: cu.chi.json',
      `  structure: ${CU_STRUCTURE}`,
      '  absorber: Cu',
      '  r: 1.5:3',
      '  shells: [{ include: Cu.1 }]',
    ];
    const two = parseStudyText([...head, 'datasets:', '  - { name: kw1, kWeightings: 1 }', '  - { name: kw3, kWeightings: 3 }', ''].join('\n'), join(folder, 'two.study.yaml'), folder);
    const one = parseStudyText([...head, 'datasets:', '  - { name: both, kWeightings: [1, 3] }', ''].join('\n'), join(folder, 'one.study.yaml'), folder);
    const preparedTwo = prepareStudy(two, { providers });
    const a = runStudy(preparedTwo);
    const b = runStudy(prepareStudy(one, { providers }));
    expect(a.status.converged && b.status.converged).toBe(true);
    for (const name of ['s0sq', 'e0', 'r_Cu_1', 'msrd_Cu_1']) {
      expect(Math.abs(a.params[name].value - b.params[name].value)).toBeLessThan(1e-9 * Math.max(1, Math.abs(b.params[name].value)));
    }
    // both data sets share r_Cu_1 and msrd_Cu_1 (each parameters of the same shell id)
    expect(a.stats.nVaried).toBe(4);
    expect(a.warnings.join('\n')).toMatch(/kw1 and kw3 read the same data file/);
  });

  it('keeps per-data-set parameters apart when each.name gives them different prefixes', () => {
    const folder = tempFolder();
    writeSyntheticCuChi(folder, 'cu-a.chi.json', { noise: 0.001, seed: 1, shells: [{ n: 12, r: 2.55, msrd: 0.006 }] });
    writeSyntheticCuChi(folder, 'cu-b.chi.json', { noise: 0.001, seed: 2, shells: [{ n: 12, r: 2.55, msrd: 0.012 }] });
    const text = [
      'provider: parametric',
      'defaults:',
      `  structure: ${CU_STRUCTURE}`,
      '  absorber: Cu',
      '  r: 1.5:3',
      'datasets:',
      '  - data: cu-a.chi.json',
      '    shells: [{ include: Cu.1, msrd: { each: { name: msrd_a } } }]',
      '  - data: cu-b.chi.json',
      '    shells: [{ include: Cu.1, msrd: { each: { name: msrd_b } } }]',
      '',
    ].join('\n');
    const result = runStudy(prepareStudy(parseStudyText(text, join(folder, 's.study.yaml'), folder), { providers }));
    expect(result.status.converged).toBe(true);
    // invented truth 0.006 and 0.012 Å^2, noise 0.001: each recovered within 4 reported errors
    expect(Math.abs(result.params.msrd_a_Cu_1.value - 0.006)).toBeLessThan(4 * result.params.msrd_a_Cu_1.error);
    expect(Math.abs(result.params.msrd_b_Cu_1.value - 0.012)).toBeLessThan(4 * result.params.msrd_b_Cu_1.error);
    // r_Cu_1 is shared (same shell id, default prefix)
    expect(Object.keys(result.params).filter((n) => n.startsWith('r_'))).toEqual(['r_Cu_1']);
  });
});

describe('symbols of a study inside expressions', () => {
  it('substitutes r0, n0, mu and the data set temperature (exact values) and reads s0sq from {file, parameter}', () => {
    const folder = tempFolder();
    writeSyntheticCuChi(folder, 'cu.chi.json', { noise: 0.002, seed: 1 });
    writeFileSync(join(folder, 'ref.fit.json'), JSON.stringify({ params: { s0sq: { value: 0.77 } } }));
    const text = [
      'provider: parametric',
      'parameters:',
      '  s0sq: { from: { file: ref.fit.json, parameter: s0sq } }',
      '  slope: { value: 0.00002, bounds: [0, 0.001] }',
      'datasets:',
      '  - data: cu.chi.json',
      `    structure: ${CU_STRUCTURE}`,
      '    absorber: Cu',
      '    temperature: 250',
      '    r: 1.5:3',
      '    shells:',
      '      - include: Cu.1',
      '        n: n0 / 2',
      '        msrd: 0.001 + slope * temperature + 0 * mu',
      '        c3: mu * 1e-6',
      '',
    ].join('\n');
    const prepared = prepareStudy(parseStudyText(text, join(folder, 's.study.yaml'), folder), { providers });
    const set = prepared.problem.parameters;
    const free = Float64Array.from(set.freeNames, (n) => (n === 'slope' ? 2e-5 : n === 'r_Cu_1' ? 2.55 : 0));
    const values = set.values(free);
    expect(values[set.indexOf('s0sq')]).toBe(0.77);
    expect(values[set.indexOf('_d0_p0_n')]).toBe(6); // 12 nearest neighbours in fcc, halved
    expect(values[set.indexOf('_d0_p0_msrd')]).toBeCloseTo(0.001 + 2e-5 * 250, 15);
    expect(values[set.indexOf('_d0_p0_c3')]).toBeCloseTo(muCuCu * 1e-6, 18);
  });
});

