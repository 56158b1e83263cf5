/**
 * Photoelectron self-energy and mean free path.
 * Sources: the Dirac-Hara form and its limits (Hara, J. Phys. Soc. Japan 22, 710 (1967): equal to the
 * Kohn-Sham exchange -(3 rho/pi)^(1/3) at the Fermi level, Kohn and Sham, Phys. Rev. 140, A1133
 * (1965)); the plasmon threshold of the single-pole model (no losses below E - E_F = w_p, Lundqvist
 * 1967); inelastic mean free paths of aluminium from the TPP-2M formula (Tanuma, Powell and Penn,
 * Surf. Interface Anal. 21, 165 (1994); formula and constants from memory).
 */
import { describe, expect, it } from 'vitest';
import { diracHaraExchange, fermiMomentum, plasmonPoleImaginary, selfEnergy } from '../src/scatter/exchange';
import { meanFreePath } from '../src/scatter/mean-free-path';

const HARTREE_EV = 27.211386245988;
const BOHR_A = 0.529177210903;

describe('Dirac-Hara exchange', () => {
  it('equals the Kohn-Sham exchange -(3 rho / pi)^(1/3) at the Fermi level (to 1e-14)', () => {
    for (const rho of [1e-3, 0.02, 1, 50]) {
      expect(diracHaraExchange(rho, fermiMomentum(rho))).toBeCloseTo(-Math.cbrt((3 * rho) / Math.PI), 14);
    }
  });
  it('falls off as -2 k_F^3 / (3 pi p^2) at high momentum (series of the Hartree-Fock factor; 1 % at p = 30 k_F)', () => {
    const rho = 0.03;
    const kf = fermiMomentum(rho);
    const p = 30 * kf;
    expect(diracHaraExchange(rho, p) / ((-2 * kf ** 3) / (3 * Math.PI * p * p))).toBeCloseTo(1, 2);
  });
  it('is weaker (less negative) at higher photoelectron energy', () => {
    const rho = 0.02;
    const dh = { exchange: 'dirac-hara', losses: 'none' } as const;
    expect(selfEnergy(rho, 3, dh)[0]).toBeGreaterThan(selfEnergy(rho, 1, dh)[0]);
    expect(selfEnergy(rho, 1, dh)[0]).toBeGreaterThan(selfEnergy(rho, 0, dh)[0]);
  });
});

describe('plasmon-pole losses', () => {
  it('vanish below the plasmon threshold E - E_F = w_p (single-pole kinematics)', () => {
    const rho = 0.01;
    const kf = fermiMomentum(rho);
    const wp = Math.sqrt(4 * Math.PI * rho);
    const kBelow = Math.sqrt(2 * wp * 0.99);
    expect(plasmonPoleImaginary(rho, Math.hypot(kBelow, kf))).toBe(0);
    expect(plasmonPoleImaginary(rho, Math.hypot(Math.sqrt(2 * wp * 3), kf))).toBeLessThan(0);
  });
  it('give aluminium (r_s = 2.07) inelastic mean free paths within 30 % of TPP-2M at 100-1000 eV (TPP-2M from memory)', () => {
    // TPP-2M for Al: N_v = 3, density 2.70 g/cm^3, M = 26.98, E_g = 0
    const U = (3 * 2.7) / 26.98;
    const Ep = 28.8 * Math.sqrt(U);
    const beta = -0.1 + 0.944 / Ep + 0.069 * Math.pow(2.7, 0.1);
    const gamma = 0.191 / Math.sqrt(2.7);
    const C = 1.97 - 0.91 * U;
    const D = 53.4 - 20.8 * U;
    const tpp = (E: number) => E / (Ep * Ep * (beta * Math.log(gamma * E) - C / E + D / (E * E)));
    const rs = 2.07;
    const rho = 3 / (4 * Math.PI * rs ** 3);
    const kf = fermiMomentum(rho);
    for (const E of [100, 200, 500, 1000]) {
      const k = Math.sqrt((2 * E) / HARTREE_EV);
      const p = Math.hypot(k, kf);
      const imfp = (p / (2 * Math.abs(plasmonPoleImaginary(rho, p)))) * BOHR_A; // intensity decay length
      expect(Math.abs(imfp / tpp(E) - 1)).toBeLessThan(0.3);
    }
  });
});

describe('mean free path lambda = 1 / Im p', () => {
  it('equals 1/Im sqrt(k^2 + i b) computed with complex arithmetic, and 2k/b for small losses', () => {
    const k = 2.1;
    const imV0 = -0.05;
    const gamma = 0.04;
    const b = 2 * 0.05 + 0.04;
    // principal sqrt of (k^2 + i b): Im = sqrt((|z| - Re z)/2)
    const mod = Math.hypot(k * k, b);
    expect(meanFreePath(k, imV0, gamma)).toBeCloseTo(1 / Math.sqrt((mod - k * k) / 2), 10);
    expect(meanFreePath(20, -1e-5, 0) / ((2 * 20) / 2e-5)).toBeCloseTo(1, 8);
    expect(meanFreePath(1, 0, 0)).toBe(Infinity);
  });
});
