/**
 * The radial atom solver: bound states against analytic hydrogenic results, the
 * scalar-relativistic equation against the Dirac energies, the LDA functional against the
 * homogeneous electron gas, electron counting, core holes, Delta-SCF edge energies against the
 * measured edges of the element table, and the error paths.
 */
import { describe, expect, it } from 'vitest';
import { ComputationError, InputError } from '../src/core/errors';
import { SPEED_OF_LIGHT_AU, HARTREE_EV } from '../src/core/constants';
import { elementByZ } from '../src/elements/index';
import {
  coreHoleConfiguration,
  groundStateConfiguration,
  ldaExchangeCorrelation,
  RELATIVISTIC_FROM_Z,
  solveAtom,
  type AtomResult,
} from '../src/scatter/atom/index';
import { integrate, logGrid } from '../src/scatter/atom/grid';
import { hartreePotential } from '../src/scatter/atom/poisson';
import { solveBoundState } from '../src/scatter/atom/radial';

function electronCount(atom: AtomResult): number {
  const grid = { r: atom.r, h: atom.h, r0: atom.r0, n: atom.r.length };
  const f = new Float64Array(atom.r.length);
  for (let i = 0; i < f.length; i++) f[i] = 4 * Math.PI * atom.r[i] * atom.r[i] * atom.density[i];
  return integrate(grid, f);
}

/** Dirac energy (without rest mass) of a point-nucleus Coulomb level, hartree (Dirac 1928; e.g. Bethe and Salpeter, Quantum Mechanics of One- and Two-Electron Atoms (1957)). */
function diracEnergy(z: number, n: number, kappa: number): number {
  const c = SPEED_OF_LIGHT_AU;
  const a = z / c;
  const k = Math.abs(kappa);
  const d = n - k + Math.sqrt(k * k - a * a);
  return c * c * (1 / Math.sqrt(1 + (a * a) / (d * d)) - 1);
}

describe('radial bound states in a bare Coulomb potential', () => {
  it('non-relativistic levels equal -Z^2 / (2 n^2) to 1e-7 relative (Bohr/Schroedinger, analytic; Numerov error ~h^4)', () => {
    for (const z of [1, 26, 92]) {
      const grid = logGrid({ r0: 1e-5 / z, h: 0.0125, rMax: 200 }); // room for hydrogen 5s
      const v = grid.r.map((r) => -z / r);
      for (const [n, l] of [[1, 0], [2, 0], [2, 1], [3, 2], [4, 3], [5, 0]]) {
        const s = solveBoundState(grid, v, { n, l, z, relativistic: false });
        expect(Math.abs(s.energy / (-(z * z) / (2 * n * n)) - 1), `Z=${z} n=${n} l=${l}`).toBeLessThan(1e-7);
      }
    }
  });

  it('scalar-relativistic s levels equal the Dirac kappa = -1 levels to 1e-9 relative (the dropped spin-orbit term vanishes for l = 0; Koelling and Harmon 1977)', () => {
    for (const z of [1, 30, 80, 92]) {
      const grid = logGrid({ r0: 1e-5 / z, h: 0.0125, rMax: 60 });
      const v = grid.r.map((r) => -z / r);
      for (const n of [1, 2, 3]) {
        const s = solveBoundState(grid, v, { n, l: 0, z, relativistic: true });
        expect(Math.abs(s.energy / diracEnergy(z, n, -1) - 1), `Z=${z} n=${n}`).toBeLessThan(1e-9);
      }
    }
  });

  it('scalar-relativistic 2p lies between the Dirac 2p1/2 and 2p3/2 levels, within 2 % of their (2j+1) average (Koelling and Harmon 1977: the j-average of the Dirac equation)', () => {
    for (const z of [30, 80]) {
      const grid = logGrid({ r0: 1e-5 / z, h: 0.0125, rMax: 60 });
      const v = grid.r.map((r) => -z / r);
      const s = solveBoundState(grid, v, { n: 2, l: 1, z, relativistic: true });
      const p12 = diracEnergy(z, 2, 1);
      const p32 = diracEnergy(z, 2, -2);
      expect(s.energy).toBeGreaterThan(p12);
      expect(s.energy).toBeLessThan(p32);
      const mean = (2 * p12 + 4 * p32) / 6;
      expect(Math.abs(s.energy / mean - 1)).toBeLessThan(0.02);
    }
  });

  it('returns a normalised wavefunction with n - l - 1 nodes', () => {
    const z = 10;
    const grid = logGrid({ r0: 1e-5 / z, h: 0.0125, rMax: 60 });
    const v = grid.r.map((r) => -z / r);
    const s = solveBoundState(grid, v, { n: 4, l: 1, z, relativistic: false });
    const p2 = s.p.map((x) => x * x);
    expect(Math.abs(integrate(grid, p2) - 1)).toBeLessThan(1e-10);
    let nodes = 0;
    for (let i = 1; i < s.p.length; i++) if (s.p[i] * s.p[i - 1] < 0) nodes++;
    expect(nodes).toBe(2);
  });
});

describe('Hartree potential', () => {
  it('of a hydrogen 1s density equals 1/r - (1 + 1/r) exp(-2r) to 1e-9 (analytic, Gauss law)', () => {
    const grid = logGrid({ r0: 1e-6, h: 0.0125, rMax: 60 });
    const rho = grid.r.map((r) => Math.exp(-2 * r) / Math.PI);
    const v = hartreePotential(grid, rho);
    for (let i = 0; i < grid.n; i += 97) {
      const r = grid.r[i];
      const exact = 1 / r - (1 + 1 / r) * Math.exp(-2 * r);
      expect(Math.abs(v[i] - exact), `r=${r}`).toBeLessThan(1e-9 * Math.max(1, exact));
    }
  });
});

describe('LDA exchange-correlation (Slater exchange + VWN5 correlation)', () => {
  const rhoOf = (rs: number) => 3 / (4 * Math.PI * rs * rs * rs);
  const exchange = (rho: number) => -0.75 * Math.cbrt((3 * rho) / Math.PI);

  it('tends to the Dirac exchange -(3/4)(3 rho / pi)^(1/3) at high density, within 1e-4 at rs = 1e-4 (Dirac 1930, analytic; correlation grows only as ln rs)', () => {
    const rho = rhoOf(1e-4);
    const { energyDensity, potential } = ldaExchangeCorrelation(rho);
    expect(Math.abs(energyDensity / exchange(rho) - 1)).toBeLessThan(1e-4);
    expect(Math.abs(potential / ((4 / 3) * exchange(rho)) - 1)).toBeLessThan(1e-4);
    expect(energyDensity).toBeLessThan(exchange(rho)); // correlation lowers the energy
  });

  it('correlation energy per electron matches the Ceperley-Alder gas values VWN5 was fitted to, within 1 % (rs 1, 2, 5, 10: -0.0600, -0.0448, -0.0281, -0.0185 Ha; from memory)', () => {
    // Ceperley and Alder, Phys. Rev. Lett. 45, 566 (1980), as fitted by VWN and PZ; from memory.
    for (const [rs, ec] of [[1, -0.06], [2, -0.0448], [5, -0.0281], [10, -0.0185]]) {
      const rho = rhoOf(rs);
      const got = ldaExchangeCorrelation(rho).energyDensity - exchange(rho);
      expect(Math.abs(got / ec - 1), `rs=${rs}`).toBeLessThan(0.01);
    }
  });

  it('high-density correlation has the Gell-Mann-Brueckner slope d eps_c / d ln rs = (1 - ln 2) / pi^2 within 1 % (Phys. Rev. 106, 364 (1957))', () => {
    const ec = (rs: number) => ldaExchangeCorrelation(rhoOf(rs)).energyDensity - exchange(rhoOf(rs));
    const slope = (ec(1e-6) - ec(1e-7)) / Math.log(10);
    expect(Math.abs(slope / ((1 - Math.LN2) / (Math.PI * Math.PI)) - 1)).toBeLessThan(0.01);
  });

  it('potential is d(rho eps_xc)/d rho (central difference, 1e-7 relative)', () => {
    for (const rho of [1e-4, 0.01, 1, 100]) {
      const d = rho * 1e-5;
      const f = (x: number) => x * ldaExchangeCorrelation(x).energyDensity;
      const numeric = (f(rho + d) - f(rho - d)) / (2 * d);
      expect(Math.abs(ldaExchangeCorrelation(rho).potential / numeric - 1), `rho=${rho}`).toBeLessThan(1e-7);
    }
  });

  it('is zero for vacuum, negative and NaN densities', () => {
    for (const rho of [0, -1, Number.NaN]) expect(ldaExchangeCorrelation(rho)).toEqual({ energyDensity: 0, potential: 0 });
  });
});

describe('ground-state configurations', () => {
  it('hold Z electrons within subshell capacities for Z = 1..96', () => {
    for (let z = 1; z <= 96; z++) {
      const config = groundStateConfiguration(z);
      expect(config.reduce((s, o) => s + o.occupation, 0), `Z=${z}`).toBe(z);
      for (const o of config) expect(o.occupation).toBeLessThanOrEqual(2 * (2 * o.l + 1));
    }
  });

  // Valence configurations of the neutral ground states, from memory of the NIST Atomic Spectra
  // Database / CRC Handbook tables ("Electron configuration of neutral atoms in the ground state").
  const valence: Array<[number, string]> = [
    [19, '4s1'],
    [24, '3d5 4s1'],
    [26, '3d6 4s2'],
    [29, '3d10 4s1'],
    [41, '4d4 5s1'],
    [46, '4d10'],
    [47, '4d10 5s1'],
    [57, '5d1 6s2'],
    [58, '4f1 5d1 6s2'],
    [64, '4f7 5d1 6s2'],
    [71, '4f14 5d1 6s2'],
    [78, '4f14 5d9 6s1'],
    [79, '4f14 5d10 6s1'],
    [90, '6d2 7s2'],
    [92, '5f3 6d1 7s2'],
    [94, '5f6 7s2'],
    [96, '5f7 6d1 7s2'],
  ];
  for (const [z, text] of valence) {
    it(`Z = ${z} has ${text} (NIST ASD / CRC Handbook, from memory)`, () => {
      const config = groundStateConfiguration(z);
      for (const part of text.split(' ')) {
        const n = Number(part[0]);
        const l = 'spdf'.indexOf(part[1]);
        const occ = Number(part.slice(2));
        expect(config.find((o) => o.n === n && o.l === l)?.occupation ?? 0, `${z} ${part}`).toBe(occ);
      }
    });
  }

  it('rejects Z outside 1..96 with an InputError naming the key', () => {
    for (const z of [0, 97, 2.5, Number.NaN]) expect(() => groundStateConfiguration(z)).toThrow(InputError);
  });
});

describe('self-consistent atoms', () => {
  it('density integrates to the electron count within 1e-6 (ground states, relativistic and not, and core holes)', () => {
    for (const options of [
      { z: 26, relativistic: false },
      { z: 29 },
      { z: 78 },
      { z: 29, coreHole: 'K' as const },
      { z: 78, coreHole: 'L3' as const },
      { z: 8, configuration: [{ n: 1, l: 0, occupation: 2 }, { n: 2, l: 0, occupation: 1.5 }, { n: 2, l: 1, occupation: 4.25 }] },
    ]) {
      const atom = solveAtom(options);
      const electrons = atom.options.configuration.reduce((s, o) => s + o.occupation, 0);
      expect(Math.abs(electronCount(atom) - electrons), JSON.stringify(options)).toBeLessThan(1e-6);
    }
  });

  it('potential = -Z/r + hartree + exchangeCorrelation and tends to 0 far out for a neutral atom', () => {
    const atom = solveAtom({ z: 29 });
    for (let i = 0; i < atom.r.length; i += 113) {
      expect(atom.potential[i]).toBeCloseTo(atom.hartree[i] + atom.exchangeCorrelation[i] - 29 / atom.r[i], 9);
    }
    expect(Math.abs(atom.potential[atom.r.length - 1])).toBeLessThan(1e-6);
  });

  it('K core hole: one electron fewer in 1s, one more in the screening level, same electron count', () => {
    const ground = solveAtom({ z: 29 });
    const hole = solveAtom({ z: 29, coreHole: 'K' });
    const occ = (a: AtomResult, n: number, l: number) => a.orbitals.find((o) => o.n === n && o.l === l)?.occupation ?? 0;
    expect(occ(hole, 1, 0)).toBe(occ(ground, 1, 0) - 1);
    expect(occ(hole, 4, 0)).toBe(occ(ground, 4, 0) + 1); // Cu 3d10 4s1 -> Zn-like 3d10 4s2 (Z + 1 analogy)
    expect(electronCount(hole)).toBeCloseTo(29, 6);
    // The less-screened core levels bind more strongly (common practice, no source).
    expect(hole.orbitals.find((o) => o.n === 1)!.energy).toBeLessThan(ground.orbitals.find((o) => o.n === 1)!.energy);
  });

  it('L1 and L2/L3 core holes empty 2s and 2p respectively', () => {
    const iron = groundStateConfiguration(26);
    const l1 = coreHoleConfiguration(iron, 'L1', 26);
    const l3 = coreHoleConfiguration(iron, 'L3', 26);
    const l2 = coreHoleConfiguration(iron, 'L2', 26);
    const get = (c: typeof iron, n: number, l: number) => c.find((o) => o.n === n && o.l === l)?.occupation ?? 0;
    expect(get(l1, 2, 0)).toBe(1);
    expect(get(l3, 2, 1)).toBe(5);
    expect(l2).toEqual(l3);
    expect(get(l3, 3, 2)).toBe(7); // Fe 3d6 4s2 -> Co-like 3d7 4s2
    for (const c of [l1, l2, l3]) expect(c.reduce((s, o) => s + o.occupation, 0)).toBe(26);
    expect(() => coreHoleConfiguration(groundStateConfiguration(3), 'L3', 3)).toThrow(InputError);
  });

  it('scalar-relativistic Au and Hg 1s levels lie deeper than the non-relativistic ones, by 5-15 % (for a bare Z = 80 nucleus the Dirac 1s lies 10.4 % below the Schroedinger one, analytic)', () => {
    for (const z of [79, 80]) {
      const nr = solveAtom({ z, relativistic: false });
      const sr = solveAtom({ z, relativistic: true });
      const e = (a: AtomResult) => a.orbitals.find((o) => o.n === 1 && o.l === 0)!.energy;
      expect(e(sr)).toBeLessThan(e(nr));
      const ratio = e(sr) / e(nr) - 1;
      expect(ratio).toBeGreaterThan(0.05);
      expect(ratio).toBeLessThan(0.15);
    }
  });

  it(`is scalar-relativistic by default from Z = ${RELATIVISTIC_FROM_Z} on`, () => {
    expect(solveAtom({ z: RELATIVISTIC_FROM_Z - 1 }).options.relativistic).toBe(false);
    expect(solveAtom({ z: RELATIVISTIC_FROM_Z }).options.relativistic).toBe(true);
  });

  // Edge energies of the element table (generated from xraylib's EdgeEnergy, see
  // src/elements/table.ts). A free-atom Delta-SCF edge (final-state atom minus ground state)
  // within 1 % of a measured edge is the usual accuracy of LDA core-hole atoms (common
  // practice, no source). Without spin-orbit the 2p hole is the j-average, compared with
  // (2 L2 + 4 L3) / 6.
  const edges: Array<[number, 'K' | 'L3', boolean]> = [
    [10, 'K', false],
    [29, 'K', true],
    [29, 'L3', true],
    [47, 'K', true],
    [78, 'L3', true],
  ];
  for (const [z, edge, relativistic] of edges) {
    it(`Delta-SCF ${edge} edge of Z = ${z} is within 1 % of the measured edge (xraylib via the element table)`, () => {
      const ground = solveAtom({ z, relativistic });
      const final = solveAtom({ z, relativistic, coreHole: edge });
      const deltaScf = (final.totalEnergy - ground.totalEnergy) * HARTREE_EV;
      const e = elementByZ(z).edges;
      const measured = edge === 'K' ? e.K!.energy : (2 * e.L2!.energy + 4 * e.L3!.energy) / 6;
      expect(Math.abs(deltaScf / measured - 1)).toBeLessThan(0.01);
    });
  }

  it('converges for every ground state Z = 1..96 with the default settings', () => {
    for (let z = 1; z <= 96; z++) expect(solveAtom({ z }).converged, `Z=${z}`).toBe(true);
  });

  it('does not depend on the grid: Ne on h = 0.0125 and h = 0.005 agrees within 1e-7 Ha', () => {
    const coarse = solveAtom({ z: 10, relativistic: false });
    const fine = solveAtom({ z: 10, relativistic: false, grid: { h: 0.005, r0: 1e-7 } });
    expect(Math.abs(coarse.totalEnergy - fine.totalEnergy)).toBeLessThan(1e-7);
  });

  it('is a pure function: same result twice, options not modified', () => {
    const options = { z: 26, coreHole: 'K' as const, grid: { h: 0.0125 } };
    const copy = JSON.parse(JSON.stringify(options));
    const a = solveAtom(options);
    const b = solveAtom(options);
    expect(options).toEqual(copy);
    expect(a.totalEnergy).toBe(b.totalEnergy);
    expect(Array.from(a.density.slice(0, 50))).toEqual(Array.from(b.density.slice(0, 50)));
  });
});

describe('errors', () => {
  it('non-convergence is a ComputationError that says so', () => {
    expect(() => solveAtom({ z: 26, maxIterations: 2 })).toThrow(ComputationError);
    expect(() => solveAtom({ z: 26, maxIterations: 2 })).toThrow(/self-consistency not reached in 2 iterations/);
  });

  it('an orbital with no bound state is a ComputationError naming it', () => {
    // H- in LDA does not bind a 2p electron (common practice, no source).
    expect(() => solveAtom({ z: 1, configuration: [{ n: 1, l: 0, occupation: 1 }, { n: 2, l: 1, occupation: 1 }] })).toThrow(/2p/);
  });

  it('bad options are InputErrors naming the key', () => {
    const cases: Array<[object, RegExp]> = [
      [{ z: 0 }, /z/],
      [{ z: 97 }, /z/],
      [{ z: 10, tolerance: -1 }, /tolerance/],
      [{ z: 10, maxIterations: 0 }, /maxIterations/],
      [{ z: 10, grid: { h: 0 } }, /grid\.h/],
      [{ z: 10, coreHole: 'M5' }, /coreHole/],
      [{ z: 10, configuration: [{ n: 1, l: 1, occupation: 1 }] }, /configuration\[0\]/],
      [{ z: 10, configuration: [{ n: 2, l: 1, occupation: 7 }] }, /configuration\[0\]/],
      [{ z: 1, coreHole: 'L1' }, /coreHole/],
    ];
    for (const [options, pattern] of cases) {
      let thrown: unknown;
      try {
        solveAtom(options as Parameters<typeof solveAtom>[0]);
      } catch (err) {
        thrown = err;
      }
      expect(thrown, JSON.stringify(options)).toBeInstanceOf(InputError);
      expect((thrown as Error).message).toMatch(pattern);
    }
  });
});
