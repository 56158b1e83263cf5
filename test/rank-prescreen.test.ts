/**
 * The fast pre-screen (src/rank/prescreen.ts) and the window projection it relies on
 * (src/rank/window.ts), checked against the refinement machinery of src/fit/exafs as an oracle:
 * the projection must equal the problem's own residuals, and the pre-screen's optimum must equal a
 * Levenberg-Marquardt refinement of the same two parameters.
 */
import { describe, it, expect } from 'vitest';
import { buildExafsProblem, type FitDomain } from '../src/fit/exafs/problem';
import { refine } from '../src/fit/exafs/refine';
import { evaluateModel } from '../src/model/exafs';
import { tablesForPaths } from '../src/model/tables';
import { shellsOfStructure } from '../src/paths/index';
import { parametricProvider } from '../src/scatter/parametric';
import { latticeFromParameters, makeStructure } from '../src/structure/structure';
import { prescreen } from '../src/rank/prescreen';
import { compileWindow, projectChi, type WindowSettings } from '../src/rank/window';

// fcc Cu, a = 3.6149 Å (from memory; the value the other tests use)
const a = 3.6149;
const FCC = [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
const cu = makeStructure({ species: FCC.map(() => 'Cu'), positions: FCC.flatMap(([u, v, w]) => [u * a, v * a, w * a]), lattice: latticeFromParameters(a, a, a, 90, 90, 90) });
const pathSet = shellsOfStructure(cu, { absorber: { element: 'Cu' }, radius: 4.6 });
const paths = pathSet.paths;
const tables = tablesForPaths(pathSet, paths, parametricProvider, 16);
const k = Float64Array.from({ length: 321 }, (_, i) => i * 0.05);
const msrd = paths.map((p) => 0.003 + 0.001 * p.r);

function simulated(s0sq: number, e0: number): Float64Array {
  return evaluateModel(k, tables, { s0sq, e0, paths: paths.map((p, j) => ({ n: p.degeneracy, r: p.r, msrd: msrd[j], c3: 0, c4: 0 })) }).chi;
}

function windowSettings(fitIn: FitDomain): WindowSettings {
  return { kRange: [3, 14], rRange: [1.2, 4.2], kWeightings: [2], fitIn, kTaper: { shape: 'hann', taper: 1 }, rTaper: { shape: 'hann', taper: 0.5 } };
}

describe('projectChi reproduces the residual layout of buildExafsProblem', () => {
  for (const fitIn of ['R', 'k', 'q'] as FitDomain[]) {
    it(`in ${fitIn} space, to 1e-12 of the largest element`, () => {
      const data = simulated(0.9, 1.5);
      const noiseChi = 1e-3;
      const w = windowSettings(fitIn);
      const window = compileWindow({ name: 'synthetic', k, chi: data, noiseChi }, w);
      // the oracle: a problem with every path quantity fixed; residuals = model - data
      const problem = buildExafsProblem(
        [{ name: 's0sq', value: 0.8, state: 'fixed' }, { name: 'e0', value: -2, state: 'fixed' }],
        [{
          name: 'synthetic', k, chi: data, noiseChi, paths, tables,
          rules: paths.map((p, j) => ({ n: String(p.degeneracy), r: String(p.r), msrd: String(msrd[j]), c3: '0', c4: '0' })),
          kRange: w.kRange, kWeightings: w.kWeightings, kTaper: w.kTaper, rRange: w.rRange, rTaper: w.rTaper, fitIn,
        }],
      );
      const expected = new Float64Array(problem.nResiduals);
      problem.residuals(new Float64Array(0), expected);
      const model = evaluateModel(window.dataset.modelK, tables, { s0sq: 0.8, e0: -2, paths: paths.map((p, j) => ({ n: p.degeneracy, r: p.r, msrd: msrd[j], c3: 0, c4: 0 })) }).chi;
      const projected = new Float64Array(window.nResiduals);
      projectChi(window, model, projected);
      const scale = Math.max(...expected.map(Math.abs));
      for (let i = 0; i < expected.length; i++) expect(Math.abs(projected[i] - window.data[i] - expected[i])).toBeLessThan(1e-12 * scale);
    });
  }
});

describe('prescreen', () => {
  it('recovers s0sq and e0 of a noise-free spectrum (s0sq 0.85 and e0 3 eV put in; tolerance 1e-3 and 0.01 eV)', () => {
    const window = compileWindow({ name: 'synthetic', k, chi: simulated(0.85, 3), noiseChi: 1e-4 }, windowSettings('R'));
    const result = prescreen(window, [{ paths, tables, msrd }], { s0sq: 'free', s0sqBounds: [0.5, 1.5], e0Range: [-15, 15] });
    expect(result.s0sq.value).toBeCloseTo(0.85, 3);
    expect(Math.abs(result.e0.value - 3)).toBeLessThan(0.01);
    // the fine q grid interpolation leaves a tiny misfit only (R-factor < 1e-6)
    expect(result.stats.rFactor).toBeLessThan(1e-6);
  });

  it('reaches the same optimum and errors as a Levenberg-Marquardt refinement of s0sq and e0 (1e-4 relative chi-square)', () => {
    // noisy data: seeded pseudo-random noise (a linear congruential generator, Knuth TAOCP vol. 2)
    let state = 12345;
    const noise = () => { state = (1103515245 * state + 12345) % 2147483648; return state / 2147483648 - 0.5; };
    const clean = simulated(0.92, -4);
    const data = Float64Array.from(clean, (v, i) => v + 0.004 * noise() / Math.max(1, k[i]) ** 0);
    const w = windowSettings('R');
    const noiseChi = 0.004 / Math.sqrt(12);
    const window = compileWindow({ name: 'noisy', k, chi: data, noiseChi }, w);
    const quick = prescreen(window, [{ paths, tables, msrd }], { s0sq: 'free', s0sqBounds: [0.5, 1.5], e0Range: [-15, 15] });
    const problem = buildExafsProblem(
      [{ name: 's0sq', value: 0.9, lower: 0.5, upper: 1.5 }, { name: 'e0', value: 0, lower: -15, upper: 15 }],
      [{
        name: 'noisy', k, chi: data, noiseChi, paths, tables,
        rules: paths.map((p, j) => ({ n: String(p.degeneracy), r: String(p.r), msrd: String(msrd[j]), c3: '0', c4: '0' })),
        kRange: w.kRange, kWeightings: w.kWeightings, kTaper: w.kTaper, rRange: w.rRange, rTaper: w.rTaper, fitIn: 'R',
      }],
    );
    const full = refine(problem);
    expect(Math.abs(quick.stats.chiSquare / full.stats.chiSquare - 1)).toBeLessThan(1e-4);
    expect(quick.s0sq.value).toBeCloseTo(full.params.s0sq.value, 3);
    expect(quick.e0.value).toBeCloseTo(full.params.e0.value, 2);
    expect(quick.e0.error / full.params.e0.error).toBeCloseTo(1, 2);
    expect(quick.s0sq.error / full.params.s0sq.error).toBeCloseTo(1, 2);
  });

  it('fits the fraction of a two-component mixture (0.3 put in; tolerance 0.01)', () => {
    // second component: the same shells 3 % longer
    const longer = paths.map((p) => ({ ...p, r: p.r * 1.03 }));
    const tablesLonger = tablesForPaths(pathSet, longer, parametricProvider, 16);
    const mix = (f: number) => {
      const a1 = evaluateModel(k, tables, { s0sq: 0.9, e0: 1, paths: paths.map((p, j) => ({ n: p.degeneracy * f, r: p.r, msrd: msrd[j], c3: 0, c4: 0 })) }).chi;
      const a2 = evaluateModel(k, tablesLonger, { s0sq: 0.9, e0: 1, paths: longer.map((p, j) => ({ n: p.degeneracy * (1 - f), r: p.r, msrd: msrd[j], c3: 0, c4: 0 })) }).chi;
      return Float64Array.from(a1, (v, i) => v + a2[i]);
    };
    const window = compileWindow({ name: 'mixture', k, chi: mix(0.3), noiseChi: 1e-4 }, windowSettings('R'));
    const result = prescreen(window, [{ paths, tables, msrd }, { paths: longer, tables: tablesLonger, msrd }], { s0sq: 'free', s0sqBounds: [0.5, 1.5], e0Range: [-10, 10] });
    expect(result.fraction!.value).toBeCloseTo(0.3, 2);
    expect(result.s0sq.value).toBeCloseTo(0.9, 2);
    expect(result.stats.nVaried).toBe(3);
  });
});
