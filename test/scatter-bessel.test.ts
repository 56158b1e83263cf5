/**
 * Spherical Bessel functions and angular algebra against SciPy (python3-scipy via /usr/bin/python3)
 * and closed forms (Abramowitz and Stegun 10.1.11-10.1.12).
 */
import { describe, expect, it } from 'vitest';
import { hasPythonModules, runPython } from './helpers/python';
import { sphericalBesselJ, sphericalBesselY, sphericalHankel } from '../src/scatter/spherical-bessel';
import { gaunt, sphericalHarmonic, wigner3j } from '../src/scatter/angular';

const haveScipy = hasPythonModules('scipy');

describe('spherical Bessel closed forms for l = 0, 1 (A&S 10.1.11, 10.1.12)', () => {
  it('j0, j1, y0, y1 match sin/cos forms to 1e-14 relative', () => {
    for (const x of [1e-2, 0.3, 1, 2.5, 7, 30, 300]) {
      const j = sphericalBesselJ(1, x);
      const y = sphericalBesselY(1, x);
      expect(j[0]).toBeCloseTo(Math.sin(x) / x, 13);
      expect(j[1]).toBeCloseTo(Math.sin(x) / (x * x) - Math.cos(x) / x, 13);
      expect(y[0]).toBeCloseTo(-Math.cos(x) / x, 13);
      expect(y[1]).toBeCloseTo(-Math.cos(x) / (x * x) - Math.sin(x) / x, 12);
    }
  });
  it('h1(x) = -e^{ix}(x + i)/x^2 (A&S 10.1.16 with the closed forms)', () => {
    const x = 3.7;
    const h = sphericalHankel(1, x);
    expect(h.re[1]).toBeCloseTo(-(x * Math.cos(x) - Math.sin(x)) / (x * x), 13);
    expect(h.im[1]).toBeCloseTo(-(x * Math.sin(x) + Math.cos(x)) / (x * x), 13);
  });
});

describe.skipIf(!haveScipy)('spherical Bessel j_l, y_l against scipy.special (skipped without /usr/bin/python3 + scipy)', () => {
  it('agree to 1e-11 relative for l = 0..60 and x from 1e-4 to 500', () => {
    const xs = [1e-4, 2e-3, 0.05, 0.5, 1, 3.3, 9.9, 25, 61.5, 140, 500];
    const lmax = 60;
    const ref = runPython<{ j: number[][]; y: number[][] }>(
      `import json,sys\nfrom scipy.special import spherical_jn, spherical_yn\nd=json.load(sys.stdin)\nimport numpy as np\nls=np.arange(d['lmax']+1)\nprint(json.dumps({'j':[[float(v) for v in spherical_jn(ls,x)] for x in d['xs']],'y':[[float(v) if np.isfinite(v) else -1e308 for v in spherical_yn(ls,x)] for x in d['xs']]}))`,
      { xs, lmax },
    );
    xs.forEach((x, ix) => {
      const j = sphericalBesselJ(lmax, x);
      const y = sphericalBesselY(lmax, x);
      for (let l = 0; l <= lmax; l++) {
        const jr = ref.j[ix][l];
        if (Math.abs(jr) > 1e-290) expect(Math.abs(j[l] - jr)).toBeLessThanOrEqual(1e-11 * Math.abs(jr) + 1e-300);
        const yr = ref.y[ix][l];
        if (Math.abs(yr) < 1e300) expect(Math.abs(y[l] - yr)).toBeLessThanOrEqual(1e-11 * Math.abs(yr));
      }
    });
  });
});

describe('angular algebra', () => {
  it('3j symbols equal tabulated closed forms (Edmonds table 2: (1 1 0;0 0 0) = -1/sqrt3, (1 1 2;0 0 0) = sqrt(2/15))', () => {
    expect(wigner3j(1, 1, 0, 0, 0, 0)).toBeCloseTo(-1 / Math.sqrt(3), 14);
    expect(wigner3j(1, 1, 2, 0, 0, 0)).toBeCloseTo(Math.sqrt(2 / 15), 14);
    // (j j 0; m -m 0) = (-1)^(j-m) / sqrt(2j+1) (Edmonds eq. 3.7.9)
    expect(wigner3j(5, 5, 0, 2, -2, 0)).toBeCloseTo(-1 / Math.sqrt(11), 14);
  });
  it('Gaunt integral equals a direct quadrature of Y_l1m1 Y_l2m2 Y_l3m3 over the sphere', () => {
    const cases: [number, number, number, number, number, number][] = [[1, 0, 1, 0, 2, 0], [2, 1, 3, -1, 1, 0], [4, -1, 3, 1, 5, 0], [1, 1, 2, -1, 3, 0]];
    for (const [l1, m1, l2, m2, l3, m3] of cases) {
      // brute-force oracle: midpoint rule in theta, phi
      const nt = 400;
      const np = 64;
      let sr = 0;
      for (let it = 0; it < nt; it++) {
        const th = ((it + 0.5) * Math.PI) / nt;
        for (let ip = 0; ip < np; ip++) {
          const ph = ((ip + 0.5) * 2 * Math.PI) / np;
          const a = sphericalHarmonic(l1, m1, th, ph);
          const b = sphericalHarmonic(l2, m2, th, ph);
          const c = sphericalHarmonic(l3, m3, th, ph);
          const abr = a[0] * b[0] - a[1] * b[1];
          const abi = a[0] * b[1] + a[1] * b[0];
          sr += (abr * c[0] - abi * c[1]) * Math.sin(th);
        }
      }
      sr *= (Math.PI / nt) * ((2 * Math.PI) / np);
      expect(gaunt(l1, m1, l2, m2, l3, m3)).toBeCloseTo(sr, 5);
    }
  });
});
