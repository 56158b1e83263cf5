/**
 * LDA atoms against the NIST atomic reference data: Kotochigova, Levine, Shirley, Stiles and
 * Clark, "Local-density-functional calculations of the energy of atoms", Phys. Rev. A 55, 191
 * (1997), and its NIST database of atomic total energies and orbital eigenvalues ("LDA" column:
 * non-relativistic Schroedinger equation, Slater exchange + VWN5 correlation, spin-unpolarised).
 * Every calculation here therefore runs with `relativistic: false`.
 *
 * Required accuracy: 1 mHa for Z <= 18, 0.1 % beyond. The reference values are given to
 * 1e-6 hartree; the tolerances below are stated beside each check and are tighter than the
 * acceptance where the reference precision allows, so a drift of the solver shows long before it
 * breaks the acceptance.
 *
 * Where the values come from:
 * - H, He, Ne, Ar total energies and the H, He, Ne eigenvalues: from memory of the NIST tables,
 *   reproduced by an independent solver before this one (listed in docs/methods.md).
 * - Be, C, N, O, the Ar eigenvalues, Kr and U total energies and the Zn 4s eigenvalue: from memory
 *   of the same NIST tables (written down before this solver was run on those atoms).
 */
import { describe, expect, it } from 'vitest';
import { solveAtom, type AtomResult } from '../src/scatter/atom/index';

/** Required accuracy for Z <= 18: 1 mHa. */
const ACCEPT_LIGHT = 1e-3;
/** Required accuracy beyond Z = 18: 0.1 % relative. */
const ACCEPT_HEAVY_RELATIVE = 1e-3;
/** Tighter tolerance used for light atoms: 5e-6 Ha (reference values carry 1e-6 Ha). */
const TIGHT = 5e-6;

function orbital(atom: AtomResult, n: number, l: number): number {
  const o = atom.orbitals.find((x) => x.n === n && x.l === l);
  if (!o) throw new Error(`no ${n},${l} orbital`);
  return o.energy;
}

interface LightReference {
  z: number;
  name: string;
  source: string;
  totalEnergy: number;
  eigenvalues: Array<[n: number, l: number, energy: number]>;
}

const LIGHT: LightReference[] = [
  { z: 1, name: 'H', source: 'NIST LDA, from memory (docs/methods.md)', totalEnergy: -0.445671, eigenvalues: [[1, 0, -0.233471]] },
  { z: 2, name: 'He', source: 'NIST LDA, from memory (docs/methods.md)', totalEnergy: -2.834836, eigenvalues: [[1, 0, -0.570425]] },
  {
    z: 4,
    name: 'Be',
    source: 'NIST LDA, from memory (fairly sure)',
    totalEnergy: -14.447209,
    eigenvalues: [[1, 0, -3.856411], [2, 0, -0.205744]],
  },
  {
    z: 6,
    name: 'C',
    source: 'NIST LDA, from memory (fairly sure)',
    totalEnergy: -37.425749,
    eigenvalues: [[1, 0, -9.947718], [2, 0, -0.500866], [2, 1, -0.199186]],
  },
  {
    z: 7,
    name: 'N',
    source: 'NIST LDA, from memory (fairly sure)',
    totalEnergy: -54.025016,
    eigenvalues: [[1, 0, -14.011501], [2, 0, -0.676151], [2, 1, -0.266297]],
  },
  {
    z: 8,
    name: 'O',
    source: 'NIST LDA, from memory (fairly sure)',
    totalEnergy: -74.473077,
    eigenvalues: [[1, 0, -18.758245], [2, 0, -0.871362], [2, 1, -0.338381]],
  },
  {
    z: 10,
    name: 'Ne',
    source: 'NIST LDA, from memory (docs/methods.md)',
    totalEnergy: -128.233481,
    eigenvalues: [[1, 0, -30.305855], [2, 0, -1.322809], [2, 1, -0.498034]],
  },
  {
    z: 18,
    name: 'Ar',
    source: 'total energy NIST LDA from memory (docs/methods.md); eigenvalues NIST LDA from memory (fairly sure)',
    totalEnergy: -525.946195,
    eigenvalues: [[1, 0, -113.800134], [2, 0, -10.794172], [2, 1, -8.443439], [3, 0, -0.883384], [3, 1, -0.38233]],
  },
];

describe('LDA atoms Z <= 18 match the NIST reference data (Kotochigova et al. 1997)', () => {
  for (const ref of LIGHT) {
    it(`${ref.name}: total energy and eigenvalues within 5e-6 Ha (acceptance 1 mHa); source: ${ref.source}`, () => {
      const atom = solveAtom({ z: ref.z, relativistic: false });
      expect(atom.converged).toBe(true);
      // Source: see ref.source; tolerance TIGHT = 5e-6 Ha (acceptance ACCEPT_LIGHT = 1e-3 Ha).
      expect(Math.abs(atom.totalEnergy - ref.totalEnergy)).toBeLessThan(TIGHT);
      expect(Math.abs(atom.totalEnergy - ref.totalEnergy)).toBeLessThan(ACCEPT_LIGHT);
      for (const [n, l, energy] of ref.eigenvalues) {
        expect(Math.abs(orbital(atom, n, l) - energy), `${ref.name} ${n},${l}`).toBeLessThan(TIGHT);
      }
    });
  }
});

describe('LDA atoms beyond Z = 18 match the NIST reference data', () => {
  it('Zn (3d10 4s2): 4s eigenvalue -0.222725 Ha within 1e-5 relative (acceptance 0.1 %); NIST LDA, from memory (moderately sure)', () => {
    const zinc = solveAtom({ z: 30, relativistic: false });
    expect(zinc.orbitals.find((o) => o.n === 3 && o.l === 2)?.occupation).toBe(10);
    const reference = -0.222725; // NIST LDA Zn 4s, from memory
    const relative = Math.abs(orbital(zinc, 4, 0) / reference - 1);
    expect(relative).toBeLessThan(1e-5);
    expect(relative).toBeLessThan(ACCEPT_HEAVY_RELATIVE);
  });

  it('Kr: total energy -2750.147940 Ha within 1e-8 relative (acceptance 0.1 %); NIST LDA, from memory (moderately sure)', () => {
    const krypton = solveAtom({ z: 36, relativistic: false });
    const reference = -2750.14794; // NIST LDA Kr total energy, from memory
    const relative = Math.abs(krypton.totalEnergy / reference - 1);
    expect(relative).toBeLessThan(1e-8);
    expect(relative).toBeLessThan(ACCEPT_HEAVY_RELATIVE);
  });

  it('U (5f3 6d1 7s2): total energy -25658.417889 Ha within 1e-8 relative on a fine grid (acceptance 0.1 %); NIST LDA, from memory (moderately sure)', () => {
    const uranium = solveAtom({ z: 92, relativistic: false, grid: { h: 0.006 } });
    const reference = -25658.417889; // NIST LDA U total energy, from memory
    const relative = Math.abs(uranium.totalEnergy / reference - 1);
    expect(relative).toBeLessThan(1e-8);
    expect(relative).toBeLessThan(ACCEPT_HEAVY_RELATIVE);
  });
});
