import { describe, expect, it } from 'vitest';
import { backTransform, forwardTransform, magnitude, uniformGrid } from '../src/numeric/fourier';
import { fftInPlace } from '../src/numeric/fft';
import { windowValue } from '../src/numeric/window';
import { besselI0 } from '../src/numeric/special';
import { gaussLegendre, integrate } from '../src/numeric/quadrature';
import { hasPythonModules, runPython } from './helpers/python';

describe('fftInPlace', () => {
  it('matches a direct discrete Fourier sum on random data (brute-force oracle, tolerance 1e-10)', () => {
    const n = 64;
    let seed = 7;
    const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5;
    const re = Float64Array.from({ length: n }, rand);
    const im = Float64Array.from({ length: n }, rand);
    const r2 = Float64Array.from(re), i2 = Float64Array.from(im);
    fftInPlace(r2, i2, 1);
    for (let j = 0; j < n; j++) {
      let sr = 0, si = 0;
      for (let m = 0; m < n; m++) {
        const a = (2 * Math.PI * m * j) / n;
        sr += re[m] * Math.cos(a) - im[m] * Math.sin(a);
        si += re[m] * Math.sin(a) + im[m] * Math.cos(a);
      }
      expect(r2[j]).toBeCloseTo(sr, 10);
      expect(i2[j]).toBeCloseTo(si, 10);
    }
  });
  it('rejects lengths that are not powers of two', () => {
    expect(() => fftInPlace(new Float64Array(12), new Float64Array(12), 1)).toThrow(RangeError);
  });
});

describe('forwardTransform', () => {
  const k = uniformGrid(0, 20, 0.05);
  it('puts the |chi(R)| peak of a single shell with constant amplitude and zero phase at its R, within one R step (issue 2 acceptance)', () => {
    for (const R of [1.8, 2.5561, 3.3]) {
      const chi = k.map((kk) => (kk > 0 ? Math.sin(2 * kk * R) / (kk * kk) : 0));
      const t = forwardTransform(k, chi, { kWeighting: 2, window: { shape: 'hann', min: 3, max: 14, taper: 1 } });
      const mag = magnitude(t);
      let best = 0;
      for (let j = 1; j < mag.length; j++) if (mag[j] > mag[best]) best = j;
      const dr = t.x[1] - t.x[0];
      expect(Math.abs(t.x[best] - R)).toBeLessThanOrEqual(dr);
    }
  });
  it('gives the analytic peak height of a boxed sine: |chi(R)| = (kmax - kmin) / (2 sqrt(pi)) (derived from the transform definition)', () => {
    const R = 2.5;
    const chi = k.map((kk) => Math.sin(2 * kk * R));
    const t = forwardTransform(k, chi, { kWeighting: 0, window: { shape: 'box', min: 3, max: 14, taper: 0 } });
    const mag = magnitude(t);
    // R = 2.5 lies exactly on the grid when dR = pi / (2048 * 0.05): not exactly, so take the max
    let peak = 0;
    for (const v of mag) peak = Math.max(peak, v);
    expect(peak).toBeGreaterThan(0.97 * (11 / (2 * Math.sqrt(Math.PI))));
    expect(peak).toBeLessThan(1.01 * (11.05 / (2 * Math.sqrt(Math.PI))));
  });
  it('back-transform of the unwindowed forward transform returns k^w chi(k) (unitary pair; tolerance 1e-4, the size of the dropped Nyquist term)', () => {
    const chi = k.map((kk) => Math.sin(2 * kk * 2.2) * Math.exp(-0.01 * kk * kk));
    const t = forwardTransform(k, chi, { kWeighting: 1, window: { shape: 'box', min: 0, max: 20, taper: 0 } });
    // window covering all R: Re of the back transform is k chi(k), except near the discontinuity at 20
    const back = backTransform(t, { window: { shape: 'box', min: -1, max: 1e9, taper: 0 } });
    for (let i = 20; i < 380; i++) expect(Math.abs(back.re[i] - k[i] * chi[i])).toBeLessThan(1e-4);
  });
  it('refuses a non-uniform grid', () => {
    const bad = Float64Array.from([0, 0.05, 0.11, 0.15]);
    expect(() => forwardTransform(bad, new Float64Array(4), { kWeighting: 0, window: { shape: 'box', min: 0, max: 1, taper: 0 } })).toThrow(/uniform/);
  });
});

describe('windowValue', () => {
  it('hann window is 1/2 at the range ends, 0 beyond the taper and 1 inside (definition in window.ts)', () => {
    const w = { shape: 'hann' as const, min: 3, max: 14, taper: 2 };
    expect(windowValue(w, 3)).toBeCloseTo(0.5, 12);
    expect(windowValue(w, 14)).toBeCloseTo(0.5, 12);
    expect(windowValue(w, 1.99)).toBe(0);
    expect(windowValue(w, 8)).toBe(1);
    expect(windowValue(w, 15.01)).toBe(0);
  });
  it('kaiser window matches scipy.signal.windows.kaiser sampled on the same points', () => {
    if (!hasPythonModules('scipy')) return void console.warn('skipped: python3-scipy not installed');
    const n = 101;
    const spec = { shape: 'kaiser' as const, min: 3, max: 13, taper: 2, beta: 6 };
    // scipy's kaiser(n, beta) samples x = -1..1 over n points; our support is [2, 14]
    const ours = Array.from({ length: n }, (_, i) => windowValue(spec, 2 + (12 * i) / (n - 1)));
    const ref = runPython<number[]>('import json,scipy.signal.windows as w; print(json.dumps(list(w.kaiser(101, 6))))');
    for (let i = 1; i < n - 1; i++) expect(ours[i]).toBeCloseTo(ref[i], 10);
  });
});

describe('special functions and quadrature', () => {
  it('besselI0 matches scipy.special.i0 (tolerance 1e-12 relative)', () => {
    if (!hasPythonModules('scipy')) return void console.warn('skipped: python3-scipy not installed');
    const xs = [0, 0.5, 1, 2.5, 6, 12, 30];
    const ref = runPython<number[]>('import json,sys,scipy.special as s; xs=json.load(sys.stdin); print(json.dumps([float(s.i0(x)) for x in xs]))', xs);
    xs.forEach((x, i) => expect(Math.abs(besselI0(x) / ref[i] - 1)).toBeLessThan(1e-12));
  });
  it('Gauss-Legendre weights sum to 2 and integrate polynomials of degree 2n-1 exactly (Abramowitz and Stegun 25.4.29)', () => {
    const { nodes, weights } = gaussLegendre(8);
    expect(weights.reduce((a, b) => a + b, 0)).toBeCloseTo(2, 14);
    let s = 0;
    for (let i = 0; i < 8; i++) s += weights[i] * nodes[i] ** 14;
    expect(s).toBeCloseTo(2 / 15, 13);
    expect(integrate(Math.sin, 0, Math.PI)).toBeCloseTo(2, 13);
  });
});
