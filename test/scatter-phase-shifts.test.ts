/**
 * Phase shifts of one sphere against analytic results for constant potentials inside the sphere
 * (square well / barrier: interior solution j_l(q r) or i_l(kappa r), matched at the radius;
 * e.g. Messiah, Quantum Mechanics, vol. 1, ch. X; Sakurai, Modern Quantum Mechanics, 7.6), with the
 * Bessel values taken from scipy.special (python3-scipy through /usr/bin/python3), the hard-sphere
 * limit tan delta_l = j_l(ka)/y_l(ka), unitarity |S_l| = 1 for real and < 1 for absorbing potentials,
 * and the optical theorem sigma_tot = (4 pi / k) Im f(0) with sigma from a quadrature of |f(theta)|^2.
 */
import { describe, expect, it } from 'vitest';
import { hasPythonModules, runPython } from './helpers/python';
import { phaseShifts, planeWaveAmplitude, spherePotentialFrom, tMatrix } from '../src/scatter/phase-shifts';

const haveScipy = hasPythonModules('scipy');

/** Reference tan(delta_l) for a constant complex potential U = ur + i ui inside radius a (scipy). */
function wellReference(a: number, k: number, ur: number, ui: number, lmax: number): { re: number[]; im: number[] } {
  return runPython(
    `import json,sys,numpy as np\nfrom scipy.special import spherical_jn as j, spherical_yn as y, spherical_in as si\nd=json.load(sys.stdin)\na,k,lmax=d['a'],d['k'],d['lmax']\nq2=k*k-2*complex(d['ur'],d['ui'])\nre=[];im=[]\nfor l in range(lmax+1):\n  if d['ui']==0 and q2.real<0:\n    kap=np.sqrt(-q2.real); g=kap*si(l,kap*a,derivative=True)/si(l,kap*a)\n  else:\n    q=np.sqrt(q2); g=q*j(l,q*a,derivative=True)/j(l,q*a)\n  t=(k*j(l,k*a,derivative=True)-g*j(l,k*a))/(k*y(l,k*a,derivative=True)-g*y(l,k*a))\n  dl=np.arctan(t)\n  re.append(float(np.real(dl))); im.append(float(np.imag(dl)))\nprint(json.dumps({'re':re,'im':im}))`,
    { a, k, ur, ui, lmax },
  );
}

describe.skipIf(!haveScipy)('square well and barrier against the analytic matching (scipy Bessel values; skipped without scipy)', () => {
  it('attractive well U = -2 Ha, a = 2 bohr: delta_l to 1e-7 rad (grid step 0.002) for l = 0..12 at k = 0.5, 2, 6 1/bohr', () => {
    for (const k of [0.5, 2, 6]) {
      const pot = spherePotentialFrom(2, () => [-2, 0], 0.002);
      const got = phaseShifts(pot, k, 12);
      const ref = wellReference(2, k, -2, 0, 12);
      for (let l = 0; l <= 12; l++) {
        // reference arctan is in (-pi/2, pi/2); compare modulo pi
        let d = got.re[l] - ref.re[l];
        d -= Math.PI * Math.round(d / Math.PI);
        expect(Math.abs(d)).toBeLessThan(1e-7);
        expect(Math.abs(got.im[l])).toBeLessThan(1e-12);
      }
    }
  });
  it('absorbing well U = -1.5 - 0.3i Ha: complex delta_l to 1e-7 and |S_l| < 1', () => {
    const pot = spherePotentialFrom(2.3, () => [-1.5, -0.3], 0.002);
    const k = 3;
    const got = phaseShifts(pot, k, 10);
    const ref = wellReference(2.3, k, -1.5, -0.3, 10);
    for (let l = 0; l <= 10; l++) {
      let d = got.re[l] - ref.re[l];
      d -= Math.PI * Math.round(d / Math.PI);
      expect(Math.abs(d)).toBeLessThan(1e-7);
      expect(Math.abs(got.im[l] - ref.im[l])).toBeLessThan(1e-7);
      expect(Math.exp(-2 * got.im[l])).toBeLessThan(1); // |S| = e^{-2 Im delta}
    }
  });
  it('repulsive barrier U = +50 Ha: delta_l to 1e-7 (interior modified Bessel i_l)', () => {
    const pot = spherePotentialFrom(1.5, () => [50, 0], 0.002);
    const got = phaseShifts(pot, 2, 6);
    const ref = wellReference(1.5, 2, 50, 0, 6);
    for (let l = 0; l <= 6; l++) {
      let d = got.re[l] - ref.re[l];
      d -= Math.PI * Math.round(d / Math.PI);
      expect(Math.abs(d)).toBeLessThan(1e-7);
    }
  });
  it('a very high barrier tends to the hard sphere, tan delta_l = j_l(ka)/y_l(ka), within the penetration depth 1/kappa', () => {
    const a = 1.5;
    const k = 2;
    const height = 2e4;
    const pot = spherePotentialFrom(a, () => [height, 0], 0.0005);
    const got = phaseShifts(pot, k, 5);
    const ref = runPython<number[]>(
      `import json,sys,numpy as np\nfrom scipy.special import spherical_jn as j, spherical_yn as y\nd=json.load(sys.stdin)\nprint(json.dumps([float(np.arctan(j(l,d['x'])/y(l,d['x']))) for l in range(6)]))`,
      { x: k * a },
    );
    // a barrier of height V acts like a hard sphere of radius a - 1/kappa: |d delta| <~ k/kappa
    const tolerance = (2 * k) / Math.sqrt(2 * height);
    for (let l = 0; l <= 5; l++) {
      let d = got.re[l] - ref[l];
      d -= Math.PI * Math.round(d / Math.PI);
      expect(Math.abs(d)).toBeLessThan(tolerance);
    }
  });
});

describe('conservation laws', () => {
  // A screened Coulomb (Yukawa) potential cut at the sphere radius, a realistic real potential.
  const yukawa = (r: number): [number, number] => [(-10 * Math.exp(-r / 0.4)) / r, 0];
  it('|exp(2 i delta_l)| = 1 to 1e-12 for a real potential', () => {
    const pot = spherePotentialFrom(2.4, yukawa, 0.01);
    for (const k of [0.3, 2, 8]) {
      const s = phaseShifts(pot, k, 30);
      for (let l = 0; l <= 30; l++) expect(Math.abs(Math.exp(-2 * s.im[l]) - 1)).toBeLessThan(1e-12);
    }
  });
  it('optical theorem: 2 pi ∫|f|^2 sin(theta) dtheta = (4 pi / k) Im f(0) to 1e-6 for a real potential', () => {
    const pot = spherePotentialFrom(2.4, yukawa, 0.01);
    for (const k of [0.7, 3, 9]) {
      const shifts = phaseShifts(pot, k, Math.ceil(k * 2.4) + 10);
      const n = 4000; // Simpson in theta
      let sum = 0;
      for (let i = 0; i <= n; i++) {
        const th = (Math.PI * i) / n;
        const [fr, fi] = planeWaveAmplitude(shifts, Math.cos(th));
        const w = i === 0 || i === n ? 1 : i % 2 === 1 ? 4 : 2;
        sum += w * (fr * fr + fi * fi) * Math.sin(th);
      }
      const sigma = 2 * Math.PI * sum * (Math.PI / n / 3);
      const forward = (4 * Math.PI * planeWaveAmplitude(shifts, 1)[1]) / k;
      expect(Math.abs(sigma / forward - 1)).toBeLessThan(1e-6);
    }
  });
  it('with absorption the elastic cross-section is below (4 pi / k) Im f(0) (the total)', () => {
    const pot = spherePotentialFrom(2.4, (r) => [yukawa(r)[0], -0.2], 0.01);
    const k = 3;
    const shifts = phaseShifts(pot, k, 20);
    let elastic = 0;
    for (let l = 0; l <= 20; l++) {
      const [tr, ti] = tMatrix(shifts.re[l], shifts.im[l]);
      elastic += (2 * l + 1) * (tr * tr + ti * ti);
    }
    elastic *= (4 * Math.PI) / (k * k);
    const total = (4 * Math.PI * planeWaveAmplitude(shifts, 1)[1]) / k;
    expect(elastic).toBeLessThan(total);
    expect(total - elastic).toBeGreaterThan(1e-3 * total);
  });
});
