/**
 * Phase shifts of one sphere against analytic results for constant potentials inside the sphere
 * (square well / barrier: interior solution j_l(q r) or i_l(kappa r), matched at the radius;
 * e.g. Messiah, Quantum Mechanics, vol. 1, ch. X; Sakurai, Modern Quantum Mechanics, 7.6), with the
 * Bessel values taken from scipy.special (python3-scipy through /usr/bin/python3), the hard-sphere
 * limit tan delta_l = j_l(ka)/y_l(ka), unitarity |S_l| = 1 for real and < 1 for absorbing potentials,
 * and the optical theorem sigma_tot = (4 pi / k) Im f(0) with sigma from a quadrature of |f(theta)|^2.
 * Scalar-relativistic option (Koelling and Harmon, J. Phys. C 10, 3107 (1977)): for a constant
 * potential inside the sphere the relativistic mass M = 1 + (E - U)/(2c^2) is constant, so the
 * large component is r j_l(q r) with q^2 = 2 M (E - U), and continuity of P and Q at the radius
 * gives w'/w = (M_0 / M) q j_l'(qa) / j_l(qa) outside, where the free waves have K^2 = 2 M_0 E
 * (our derivation from the equations; Bessel values from scipy); for c -> infinity the equation
 * is the non-relativistic one (an independent integrator, Adams-Moulton instead of Numerov); and
 * against the radial Dirac equation (e.g. Rose, Relativistic Electron Theory (1961), ch. 5; from
 * memory), integrated here independently by Runge-Kutta: for l = 0 the scalar-relativistic equation
 * is the Dirac equation of kappa = -1 (the spin-orbit term vanishes), and for l > 0 it is the
 * Dirac equation with the spin-orbit term dropped, so its phase shift is the (2j + 1)-weighted
 * average of kappa = -(l+1) and kappa = l to first order in the spin-orbit coupling.
 */
import { describe, expect, it } from 'vitest';
import { hasPythonModules, runPython } from './helpers/python';
import { freeWaveNumber, phaseShifts, planeWaveAmplitude, regularSolution, spherePotentialFrom, tMatrix } from '../src/scatter/phase-shifts';
import { besselDerivatives, sphericalBesselJ, sphericalBesselY } from '../src/scatter/spherical-bessel';

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

/** Reference delta_l (scipy) of a constant complex U inside radius a, scalar-relativistic with speed of light c. */
function relativisticWellReference(a: number, k: number, ur: number, ui: number, c: number, lmax: number): { re: number[]; im: number[]; q: [number, number] } {
  return runPython(
    `import json,sys,numpy as np\nfrom scipy.special import spherical_jn as j, spherical_yn as y\nd=json.load(sys.stdin)\na,k,c,lmax=d['a'],d['k'],d['c'],d['lmax']\nE=k*k/2\nU=complex(d['ur'],d['ui'])\nM=1+(E-U)/(2*c*c)\nM0=1+E/(2*c*c)\nq=np.sqrt(2*M*(E-U))\nK=np.sqrt(2*M0*E)\nre=[];im=[]\nfor l in range(lmax+1):\n  g=(M0/M)*q*j(l,q*a,derivative=True)/j(l,q*a)\n  t=(K*j(l,K*a,derivative=True)-g*j(l,K*a))/(K*y(l,K*a,derivative=True)-g*y(l,K*a))\n  dl=np.arctan(t)\n  re.append(float(np.real(dl))); im.append(float(np.imag(dl)))\nprint(json.dumps({'re':re,'im':im,'q':[float(q.real),float(q.imag)]}))`,
    { a, k, ur, ui, c, lmax },
  );
}

describe('scalar-relativistic radial equation', () => {
  const yukawa = (r: number): [number, number] => [(-29 * Math.exp(-r / 0.35)) / r - 0.4, -0.05];
  it('for c -> infinity (c = 1e7) equals the non-relativistic phase shifts to 1e-7 rad (Numerov vs Adams-Moulton on a log grid of step 0.001; both converge to one limit, and differ from it by ~1e-5 at step 0.01)', () => {
    const pot = spherePotentialFrom(2.6, yukawa, 0.001);
    for (const k of [0.8, 3, 7]) {
      const lmax = Math.ceil(k * 2.6) + 5;
      const nr = phaseShifts(pot, k, lmax);
      const sr = phaseShifts(pot, k, lmax, undefined, { relativistic: true, speedOfLight: 1e7 });
      expect(sr.waveNumber).toBeCloseTo(k, 12);
      for (let l = 0; l <= lmax; l++) {
        let d = sr.re[l] - nr.re[l];
        d -= Math.PI * Math.round(d / Math.PI);
        expect(Math.abs(d), `l = ${l}, k = ${k}`).toBeLessThan(1e-7);
        expect(Math.abs(sr.im[l] - nr.im[l]), `l = ${l}, k = ${k}`).toBeLessThan(1e-7);
      }
    }
  });
  describe.skipIf(!haveScipy)('constant wells against the analytic matching (scipy Bessel values; skipped without scipy)', () => {
    it('strongly relativistic (c = 3 Ha units), attractive and absorbing wells: complex delta_l to 1e-7 for l = 0..10', () => {
      for (const [a, k, ur, ui] of [[2, 2, -2, 0], [2.3, 3, -1.5, -0.3], [1.8, 6, -4, -0.5]]) {
        const pot = spherePotentialFrom(a, () => [ur, ui], 0.002);
        const got = phaseShifts(pot, k, 10, undefined, { relativistic: true, speedOfLight: 3 });
        const ref = relativisticWellReference(a, k, ur, ui, 3, 10);
        expect(got.waveNumber).toBeCloseTo(k * Math.sqrt(1 + (k * k) / 36), 12);
        for (let l = 0; l <= 10; l++) {
          let d = got.re[l] - ref.re[l];
          d -= Math.PI * Math.round(d / Math.PI);
          expect(Math.abs(d), `a ${a} k ${k} l ${l}`).toBeLessThan(1e-7);
          expect(Math.abs(got.im[l] - ref.im[l]), `a ${a} k ${k} l ${l}`).toBeLessThan(1e-7);
        }
      }
    });
    it('the regular solution inside a constant well is proportional to j_l(q r) (relative 1e-6 over the outer half of the sphere)', () => {
      const a = 2.3;
      const k = 3;
      const pot = spherePotentialFrom(a, () => [-1.5, -0.3], 0.002);
      const opts = { relativistic: true, speedOfLight: 3 };
      const shifts = phaseShifts(pot, k, 2, undefined, opts);
      const ref = relativisticWellReference(a, k, -1.5, -0.3, 3, 2);
      for (const l of [0, 1, 2]) {
        const sol = regularSolution(pot, k, l, { re: shifts.re[l], im: shifts.im[l] }, opts);
        const radii = Array.from(pot.r).map((r, i) => [r, i] as const).filter(([r]) => r > a / 2);
        const bessel = runPython<[number, number][]>(
          `import json,sys,numpy as np\nfrom scipy.special import spherical_jn as j\nd=json.load(sys.stdin)\nq=complex(*d['q'])\nprint(json.dumps([[float(v.real),float(v.imag)] for v in (j(d['l'],q*np.array(d['r'])))]))`,
          { q: ref.q, l, r: radii.map(([r]) => r) },
        );
        // ratio sol / j_l(q r) must be one complex constant
        const ratio = radii.map(([, i], n) => {
          const [br, bi] = bessel[n];
          const d = br * br + bi * bi;
          return [(sol.re[i] * br + sol.im[i] * bi) / d, (sol.im[i] * br - sol.re[i] * bi) / d];
        });
        const [r0, i0] = ratio[ratio.length - 1];
        for (const [rr, ri] of ratio) expect(Math.hypot(rr - r0, ri - i0) / Math.hypot(r0, i0)).toBeLessThan(1e-6);
      }
    });
  });
  it('agrees with the Dirac equation for a Z = 30 screened Coulomb potential: s waves (kappa = -1) to 1e-6 rad, l = 1..3 the (2j+1)-weighted Dirac average within 5 % of the relativistic shift (plus 1e-6 rad)', () => {
    const c = 137.035999084; // 1/alpha, CODATA 2018
    const z = 30;
    const radius = 2.6;
    const v = (r: number) => (-z * Math.exp(-r / 0.4)) / r - 0.3;
    const mod = (d: number) => d - Math.PI * Math.round(d / Math.PI);
    /** Dirac phase shift of kappa at kinetic energy k^2/2: G' = -kappa G/r + (2c + (E - V)/c) F, F' = kappa F/r - (E - V) G/c. */
    const dirac = (kappa: number, k: number): number => {
      const e = (k * k) / 2;
      const r0 = 1e-7;
      const steps = 80000;
      const h = Math.log(radius / r0) / steps;
      const gamma = Math.sqrt(kappa * kappa - (z / c) ** 2);
      // point-nucleus start G ~ r^gamma, F/G = c (gamma + kappa) / Z
      let g = 1;
      let f = ((gamma + kappa) * c) / z;
      const rhs = (x: number, gg: number, ff: number): [number, number] => {
        const r = r0 * Math.exp(x);
        const w = e - v(r);
        return [-kappa * gg + r * (2 * c + w / c) * ff, kappa * ff - ((r * w) / c) * gg];
      };
      for (let i = 0; i < steps; i++) {
        const x = i * h;
        const [a1, b1] = rhs(x, g, f);
        const [a2, b2] = rhs(x + h / 2, g + (h * a1) / 2, f + (h * b1) / 2);
        const [a3, b3] = rhs(x + h / 2, g + (h * a2) / 2, f + (h * b2) / 2);
        const [a4, b4] = rhs(x + h, g + h * a3, f + h * b3);
        g += (h * (a1 + 2 * a2 + 2 * a3 + a4)) / 6;
        f += (h * (b1 + 2 * b2 + 2 * b3 + b4)) / 6;
        if (Math.abs(g) > 1e100) {
          g *= 1e-100;
          f *= 1e-100;
        }
      }
      const l = kappa < 0 ? -kappa - 1 : kappa;
      const m0 = 1 + e / (2 * c * c);
      const wave = Math.sqrt(2 * m0 * e);
      // outside (V = 0): w = G / r, w'/w = -(kappa + 1)/R + 2 c M0 F / G
      const logDerivative = -(kappa + 1) / radius + (2 * c * m0 * f) / g;
      const x = wave * radius;
      const j = sphericalBesselJ(l + 1, x);
      const y = sphericalBesselY(l + 1, x);
      const jd = besselDerivatives(j, l, x);
      const yd = besselDerivatives(y, l, x);
      return Math.atan((wave * jd[l] - logDerivative * j[l]) / (wave * yd[l] - logDerivative * y[l]));
    };
    const pot = spherePotentialFrom(radius, (r) => [v(r), 0], 0.001, 1e-7);
    for (const k of [0.5, 2, 6]) {
      const nr = phaseShifts(pot, k, 3);
      const sr = phaseShifts(pot, k, 3, undefined, { relativistic: true });
      expect(Math.abs(mod(sr.re[0] - dirac(-1, k))), `s wave, k ${k}`).toBeLessThan(1e-6);
      for (let l = 1; l <= 3; l++) {
        const shift = mod(sr.re[l] - nr.re[l]);
        const average = ((l + 1) * mod(dirac(-l - 1, k) - nr.re[l]) + l * mod(dirac(l, k) - nr.re[l])) / (2 * l + 1);
        expect(Math.abs(shift - average), `l ${l}, k ${k}: ${shift} vs ${average}`).toBeLessThan(0.05 * Math.abs(average) + 1e-6);
      }
    }
  });
  it('the free wave number is k sqrt(1 + k^2 / (4 c^2)), from E(1 + E/(2c^2)) = K^2/2 with E = k^2/2 (relativistic kinematics)', () => {
    const c = 137.035999084; // CODATA 2018 1/alpha, the speed of light in hartree atomic units
    for (const k of [0.5, 4, 10]) {
      const e = (k * k) / 2;
      const kRel = Math.sqrt(2 * e * (1 + e / (2 * c * c)));
      expect(freeWaveNumber(k, { relativistic: true })).toBeCloseTo(kRel, 12);
      expect(freeWaveNumber(k)).toBe(k);
    }
  });
});
