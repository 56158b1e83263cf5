import { describe, expect, it } from 'vitest';
import { evaluateModel, type ModelParameters } from '../src/model/exafs';
import { parametricProvider } from '../src/scatter/parametric';
import { uniformGrid } from '../src/numeric/fourier';
import type { ScatteringTable } from '../src/scatter/provider';
import { K2_PER_EV } from '../src/core/constants';

const grid = uniformGrid(0, 21, 0.05);
const tableCu = parametricProvider.compute({ absorber: 'Cu', scatterer: 'Cu', edge: 'K', distance: 2.55, k: grid });
const tableO = parametricProvider.compute({ absorber: 'Cu', scatterer: 'O', edge: 'K', distance: 1.95, k: grid });
const k = uniformGrid(2, 15, 0.05);

function constantTable(amplitude: number, phase: number, lambda: number): ScatteringTable {
  return {
    k: grid,
    amplitude: new Float64Array(grid.length).fill(amplitude),
    phase: new Float64Array(grid.length).fill(phase),
    meanFreePath: new Float64Array(grid.length).fill(lambda),
    info: { provider: 'test', approximate: true, settings: {}, hash: 'x' },
  };
}

describe('evaluateModel', () => {
  it('reproduces the EXAFS equation written out by hand for one path with constant functions (docs/methods.md)', () => {
    const params: ModelParameters = { s0sq: 0.9, e0: 0, paths: [{ n: 6, r: 2.1, msrd: 0.005, c3: 0.0002, c4: 0.00001 }] };
    const { chi } = evaluateModel(k, [constantTable(0.4, -1.1, 8)], params);
    for (let i = 0; i < k.length; i += 17) {
      const q = k[i];
      const expected = (0.9 * 6 * 0.4) / (q * 2.1 * 2.1) * Math.exp(-2 * q * q * 0.005 + (2 / 3) * q ** 4 * 0.00001)
        * Math.exp((-2 * 2.1) / 8) * Math.sin(2 * q * 2.1 - 1.1 - (4 / 3) * q ** 3 * 0.0002);
      expect(chi[i]).toBeCloseTo(expected, 12);
    }
  });
  it('shifts k by the E0 shift: q = sqrt(k^2 - 0.2624683 e0) (docs/methods.md, Kinematics)', () => {
    const base: ModelParameters = { s0sq: 1, e0: 0, paths: [{ n: 1, r: 2.5, msrd: 0, c3: 0, c4: 0 }] };
    const shifted: ModelParameters = { ...base, e0: 10 };
    const t = constantTable(0.5, 0, 1e9);
    expect(K2_PER_EV).toBeCloseTo(0.2624683, 6); // 1 / 3.8099821 eV Å^2 (hbar^2 / 2 m_e, CODATA 2018) = 0.26246842; checked to 6 digits
    const q = Float64Array.from(k, (kk) => Math.sqrt(kk * kk - K2_PER_EV * 10));
    const a = evaluateModel(k, [t], shifted).chi;
    const b = evaluateModel(q, [t], base).chi;
    for (let i = 0; i < k.length; i += 13) expect(a[i]).toBeCloseTo(b[i], 10);
  });
  it('has analytic derivatives that agree with central finite differences (rel. 1e-5)', () => {
    const params: ModelParameters = {
      s0sq: 0.85, e0: 3.2,
      paths: [{ n: 4, r: 1.96, msrd: 0.004, c3: 0.0001, c4: 0.00002 }, { n: 12, r: 2.56, msrd: 0.008, c3: -0.0002, c4: 0.00001 }],
    };
    const tables = [tableO, tableCu];
    const { derivatives } = evaluateModel(k, tables, params, { withDerivatives: true });
    const check = (analytic: Float64Array, mutate: (p: ModelParameters, h: number) => ModelParameters, h: number) => {
      const up = evaluateModel(k, tables, mutate(params, h)).chi;
      const down = evaluateModel(k, tables, mutate(params, -h)).chi;
      let maxErr = 0, scale = 0;
      for (let i = 0; i < k.length; i++) {
        const fd = (up[i] - down[i]) / (2 * h);
        maxErr = Math.max(maxErr, Math.abs(fd - analytic[i]));
        scale = Math.max(scale, Math.abs(fd));
      }
      expect(maxErr / scale).toBeLessThan(1e-5);
    };
    const withPath = (p: ModelParameters, j: number, key: 'n' | 'r' | 'msrd' | 'c3' | 'c4', h: number): ModelParameters =>
      ({ ...p, paths: p.paths.map((q, i) => (i === j ? { ...q, [key]: q[key] + h } : q)) });
    check(derivatives!.s0sq, (p, h) => ({ ...p, s0sq: p.s0sq + h }), 1e-6);
    // the e0 derivative goes through the interpolated tables, whose derivative is piecewise: looser step
    check(derivatives!.e0, (p, h) => ({ ...p, e0: p.e0 + h }), 1e-4);
    for (let j = 0; j < 2; j++) {
      check(derivatives!.paths[j].n, (p, h) => withPath(p, j, 'n', h), 1e-6);
      check(derivatives!.paths[j].r, (p, h) => withPath(p, j, 'r', h), 1e-6);
      check(derivatives!.paths[j].msrd, (p, h) => withPath(p, j, 'msrd', h), 1e-7);
      check(derivatives!.paths[j].c3, (p, h) => withPath(p, j, 'c3', h), 1e-7);
      check(derivatives!.paths[j].c4, (p, h) => withPath(p, j, 'c4', h), 1e-7);
    }
  });
});

describe('parametric provider (approximate, for tests only)', () => {
  it('labels itself approximate and follows the trade trend that heavier scatterers peak at higher k (common practice, no source)', () => {
    expect(tableCu.info.approximate).toBe(true);
    const peak = (t: ScatteringTable) => t.k[t.amplitude.indexOf(Math.max(...t.amplitude))];
    expect(peak(tableCu)).toBeGreaterThan(peak(tableO));
  });
});
