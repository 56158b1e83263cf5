import { describe, expect, it } from 'vitest';
import { correlatedDebyeMsrd, einsteinMsrd, reducedMass } from '../src/model/disorder';
import { HBAR2_OVER_KB_AMU_A2_K } from '../src/core/constants';
import { elementBySymbol } from '../src/elements/index';
import { hasPythonModules, runPython } from './helpers/python';

const cuMass = elementBySymbol('Cu').weight;
const mu = reducedMass(cuMass, cuMass);
// fcc Cu, a = 3.6149 Å (from memory, Wyckoff, Crystal Structures vol. 1): 4 atoms per a^3, first shell at a / sqrt(2)
const a = 3.6149;
const density = 4 / a ** 3;
const r1 = a / Math.SQRT2;
// Debye temperature of Cu: 315 K (Ashcroft and Mermin, Solid State Physics (1976), Table 23.3; from memory)
const thetaD = 315;

describe('constants for the disorder models', () => {
  it('hbar^2 / (k_B amu) is 48.5 Å^2 K (CODATA 2018 values combined; common practice, no source)', () => {
    expect(HBAR2_OVER_KB_AMU_A2_K).toBeCloseTo(48.508, 2);
  });
});

describe('einsteinMsrd', () => {
  it('tends to the classical limit k_B T / (mu w_E^2) at high temperature (equipartition)', () => {
    const thetaE = 250;
    const T = 5000;
    const classical = (HBAR2_OVER_KB_AMU_A2_K * T) / (mu * thetaE * thetaE);
    // coth(x) = 1/x + x/3 + O(x^3): the first quantum correction is x^2/3 with x = theta_E / 2T
    const x = thetaE / (2 * T);
    expect(einsteinMsrd(mu, thetaE, T) / classical).toBeCloseTo(1 + (x * x) / 3, 7);
  });
  it('gives the zero-point value hbar^2 / (2 mu k_B theta_E) at T = 0', () => {
    expect(einsteinMsrd(mu, 250, 0)).toBeCloseTo(HBAR2_OVER_KB_AMU_A2_K / (2 * mu * 250), 12);
  });
});

describe('correlatedDebyeMsrd (Sevillano, Meuth and Rehr, Phys. Rev. B 20, 4908 (1979))', () => {
  it.skipIf(!hasPythonModules('scipy'))('matches an independent scipy.integrate.quad evaluation of the same integral for Cu (rel. 1e-8; skipped without python3-scipy)', () => {
    const cases = [[295, r1], [10, r1], [600, r1], [295, a]];
    const script = `
import json, sys, numpy as np
from scipy.integrate import quad
hbar = 1.054571817e-34; kB = 1.380649e-23; amu = 1.66053906660e-27
d = json.load(sys.stdin)
out = []
for T, R in d['cases']:
    kD = (6 * np.pi**2 * d['density'])**(1/3)
    wD = kB * d['thetaD'] / hbar
    def f(w):
        x = w * kD * R / wD
        return 3 * w / wD**3 * (1 - np.sin(x) / x) / np.tanh(hbar * w / (2 * kB * T))
    val, err = quad(f, 1e-9 * wD, wD, epsabs=0, epsrel=1e-12, limit=200)
    out.append(hbar / (2 * d['mu'] * amu) * val * 1e20)
print(json.dumps(out))`;
    const ref = runPython<number[]>(script, { cases, density, thetaD, mu });
    cases.forEach(([T, R], i) => {
      expect(Math.abs(correlatedDebyeMsrd(mu, thetaD, T, R, density) / ref[i] - 1)).toBeLessThan(1e-8);
    });
  });
  it('gives the published magnitude for the first shell of Cu at 295 K: 0.008-0.009 Å^2 (issue 2, with theta_D = 315 K)', () => {
    const s2 = correlatedDebyeMsrd(mu, thetaD, 295, r1, density);
    expect(s2).toBeGreaterThan(0.008);
    expect(s2).toBeLessThan(0.009);
  });
  it('approaches the uncorrelated limit (twice the projected Debye MSD) at large distance', () => {
    // uncorrelated: 2 <u_x^2> with <u_x^2> = hbar^2/(2 M k_B theta_D) int 3x coth(x theta/2T) dx, M = 2 mu for equal masses
    const far = correlatedDebyeMsrd(mu, thetaD, 295, 500, density);
    const near = correlatedDebyeMsrd(mu, thetaD, 295, r1, density);
    expect(far).toBeGreaterThan(near);
    const uncorrelated = correlatedDebyeMsrd(mu, thetaD, 295, 1e6, density);
    expect(Math.abs(far / uncorrelated - 1)).toBeLessThan(0.01);
  });
  it('grows with temperature and falls with Debye temperature', () => {
    expect(correlatedDebyeMsrd(mu, thetaD, 400, r1, density)).toBeGreaterThan(correlatedDebyeMsrd(mu, thetaD, 200, r1, density));
    expect(correlatedDebyeMsrd(mu, 400, 295, r1, density)).toBeLessThan(correlatedDebyeMsrd(mu, 300, 295, r1, density));
  });
});
