/**
 * The core/valence photoelectron self-energy ('valence-hedin-lundqvist', src/scatter/exchange.ts):
 * Hedin-Lundqvist of the valence density plus the Dirac-Hara exchange of the core density.
 * Sources: its limits follow from its parts. The Hedin-Lundqvist self-energy is the model's own
 * reference when the core density is zero (the definition); the Dirac-Hara exchange equals the
 * Kohn-Sham exchange -(3 rho / pi)^(1/3) at the Fermi level (Hara, J. Phys. Soc. Japan 22, 710
 * (1967); Kohn and Sham, Phys. Rev. 140, A1133 (1965)) and falls off as -2 k_F^3 / (3 pi p^2) at
 * high momentum (series of its Hartree-Fock factor, our derivation); the core of Cu is the
 * 18-electron argon configuration 1s2 2s2 2p6 3s2 3p6 (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { coreValenceSelfEnergy, fermiMomentum, prepareSelfEnergyGrid, selfEnergy, selfEnergyOnGrid, type SelfEnergyOptions } from '../src/scatter/exchange';
import { coreShellsOf, solveAtomIntegrals } from '../src/scatter/first-principles';
import { atomIntegrals, averagedCoreDensity, averagedDensity } from '../src/scatter/muffin-tin';

const split: SelfEnergyOptions = { exchange: 'valence-hedin-lundqvist', losses: 'plasmon-pole' };
const hl: SelfEnergyOptions = { exchange: 'hedin-lundqvist', losses: 'plasmon-pole' };

describe('core/valence self-energy limits', () => {
  it('is exactly the Hedin-Lundqvist self-energy when the core density is zero (definition)', () => {
    for (const rho of [1e-4, 0.01, 0.3, 20]) {
      for (const k of [0, 0.8, 2.5, 7]) {
        const [a, b] = selfEnergy(rho, k, split, [0, 0], 0);
        const [c, d] = selfEnergy(rho, k, hl);
        expect(a).toBe(c);
        expect(b).toBe(d);
      }
    }
  });
  it('gives a pure core density its Kohn-Sham exchange -(3 rho / pi)^(1/3) at the Fermi level and no losses (to 1e-12)', () => {
    for (const rho of [0.5, 10, 3000]) {
      const [re, im] = coreValenceSelfEnergy(rho, rho, 0);
      expect(Math.abs(re + Math.cbrt((3 * rho) / Math.PI))).toBeLessThan(1e-12 * Math.cbrt(rho));
      expect(im).toBe(0);
    }
  });
  it('tends to zero at high energy, the core part as -2 pi rho_c / p^2 (1 % at p = 30 k_F)', () => {
    const rho = 2;
    const core = 1.5;
    const kf = fermiMomentum(rho);
    const k = Math.sqrt(899) * kf; // p = 30 k_F
    const p = 30 * kf;
    const [re] = coreValenceSelfEnergy(rho, core, k);
    const [valence] = selfEnergy(rho - core, k, hl);
    expect((re - valence) / ((-2 * Math.PI * core) / (p * p))).toBeCloseTo(1, 2);
    // the whole self-energy decreases in magnitude towards zero along the energy axis
    let previous = Math.abs(coreValenceSelfEnergy(rho, core, 5)[0]);
    for (const kk of [10, 20, 40, 80, 160, 320]) {
      const now = Math.abs(coreValenceSelfEnergy(rho, core, kk)[0]);
      expect(now).toBeLessThan(previous);
      previous = now;
    }
    expect(previous).toBeLessThan(0.01 * Math.abs(coreValenceSelfEnergy(rho, core, 0)[0]));
  });
  it('clamps the core density to [0, rho]', () => {
    expect(coreValenceSelfEnergy(0.2, 5, 1)).toEqual(coreValenceSelfEnergy(0.2, 0.2, 1));
    expect(coreValenceSelfEnergy(0.2, -1, 1)).toEqual(coreValenceSelfEnergy(0.2, 0, 1));
  });
  it('selfEnergyOnGrid equals the pointwise model with a core density (to 1e-12)', () => {
    const density = Float64Array.from([0, 1e-4, 0.003, 0.02, 0.3, 5, 400, 2e4]);
    const core = Float64Array.from([0, 0, 0.001, 0.02, 0.1, 4, 390, 2e4]);
    const grid = prepareSelfEnergyGrid(density, core);
    const re = new Float64Array(density.length);
    const im = new Float64Array(density.length);
    for (const options of [split, { ...split, losses: 'none' } as const]) {
      for (const k of [0, 0.7, 3, 9]) {
        selfEnergyOnGrid(grid, k, options, re, im);
        for (let i = 0; i < density.length; i++) {
          const [a, b] = selfEnergy(density[i], k, options, [0, 0], core[i]);
          expect(Math.abs(re[i] - a)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(a)));
          expect(Math.abs(im[i] - b)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(b)));
        }
      }
    }
  });
});

describe('core densities of the atoms', () => {
  it('takes the closed shells of the preceding noble gas as the core (none for He, [Ar] for Fe, Se 3d stays valence)', () => {
    expect(coreShellsOf(2).size).toBe(0);
    expect([...coreShellsOf(26)].sort()).toEqual(['1,0', '2,0', '2,1', '3,0', '3,1']);
    expect(coreShellsOf(34).has('3,2')).toBe(false);
  });
  it('Cu holds 18 core electrons, 17 with a K hole (argon core; to 1e-6)', () => {
    for (const [hole, count] of [[null, 18], ['K', 17]] as const) {
      const atom = solveAtomIntegrals(29, hole);
      const r = new Float64Array(atom.n).map((_, i) => atom.r0 * Math.exp(i * atom.h));
      // ∫ 4 pi r^2 rho_c dr = ∫ 4 pi r^3 rho_c d(ln r), trapezoid on the log grid
      let electrons = 0;
      for (let i = 1; i < atom.n; i++) {
        const y0 = 4 * Math.PI * r[i - 1] ** 3 * atom.coreRho![i - 1];
        const y1 = 4 * Math.PI * r[i] ** 3 * atom.coreRho![i];
        electrons += 0.5 * atom.h * (y0 + y1);
      }
      expect(Math.abs(electrons - count)).toBeLessThan(1e-6 * count);
    }
  });
  it('averages the core density about a displaced centre like the total density (Mattheiss; to 1e-12)', () => {
    const r = new Float64Array(400).map((_, i) => 1e-4 * Math.exp(i * 0.04));
    const density = r.map((x) => Math.exp(-2 * x) / Math.PI);
    const atom = atomIntegrals({ z: 1, r, density, coreDensity: density });
    for (const [x, d] of [[0.5, 2], [1.7, 2.5], [3, 1]]) {
      expect(Math.abs(averagedCoreDensity(atom, x, d) - averagedDensity(atom, x, d))).toBeLessThan(1e-12);
    }
    expect(averagedCoreDensity(atomIntegrals({ z: 1, r, density }), 0.5, 2)).toBe(0);
  });
});
