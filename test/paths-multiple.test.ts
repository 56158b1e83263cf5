/**
 * Multiple-scattering paths (src/paths/multiple.ts) and their plane-wave functions
 * (src/scatter/multiple-scattering.ts).
 *
 * Sources of the reference values:
 * - fcc geometry (Wyckoff, Crystal Structures, 2nd ed. (1963), vol. 1: fcc Cu a = 3.6149 Å, from
 *   memory, as in test/rank-measured.test.ts): each atom has 12 nearest neighbours at d = a/sqrt 2,
 *   and each of them is a nearest neighbour of 4 of the other 11, so the absorber lies in
 *   12 * 4 / 2 = 24 nearest-neighbour triangles (equilateral, all angles 60 degrees), each run in two
 *   directions: 48 paths of half length 1.5 d; the 12 atoms at 2d each have one neighbour midway
 *   (our derivation from the geometry).
 * - Curved-wave single scattering of src/scatter/amplitude.ts (itself checked in
 *   test/scatter-amplitude.test.ts against a numerical projection oracle and the plane-wave limit):
 *   the collinear chain with one scatterer must reproduce it.
 * - Hard-sphere scattering (Sakurai, Modern Quantum Mechanics, rev. ed. (1994), section 7.6):
 *   tan delta_l = j_l(ka) / y_l(ka); at low energy f(theta) -> -a for every angle.
 * - Optical theorem (same book, section 7.3): Im f(0) = k sigma / (4 pi) with
 *   sigma = (4 pi / k^2) sum (2l+1) sin^2 delta_l.
 */
import { describe, expect, it } from 'vitest';
import { multiplePaths } from '../src/paths/multiple';
import { combineChannels, effectiveAmplitude, planeWaveBackscattering, translationCoefficients } from '../src/scatter/amplitude';
import { chainCoefficients, collinearDisplacements, collinearPathFactor } from '../src/scatter/collinear-paths';
import { pathFactor, planeWaveScattering } from '../src/scatter/multiple-scattering';
import { sphericalBesselJ, sphericalBesselY } from '../src/scatter/spherical-bessel';
import { buildClusters } from '../src/structure/cluster';
import { resolveSettings } from '../src/rank/setup';
import { DEFAULT_MULTIPLE_SCATTERING, multipleScatteringForComponent } from '../src/rank/multiple';
import { groupShells } from '../src/paths/pathset';
import { defaultProviders } from '../src/scatter/registry';
import type { EdgeName } from '../src/elements/index';
import type { Chi } from '../src/reduce/index';
import { fractionalToCartesian, latticeFromParameters, makeStructure } from '../src/structure/structure';

const FCC: [number, number, number][] = [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
const A_CU = 3.6149;
const D_CU = A_CU / Math.SQRT2;

function fccCu() {
  const lattice = latticeFromParameters(A_CU, A_CU, A_CU, 90, 90, 90);
  return makeStructure({ species: FCC.map(() => 'Cu'), positions: FCC.flatMap(([u, v, w]) => fractionalToCartesian(lattice, u, v, w)), lattice });
}

/** Hard-sphere phase shifts (real) for l = 0..lmax at ka. */
function hardSphere(ka: number, lmax: number): { re: Float64Array; im: Float64Array } {
  const j = sphericalBesselJ(lmax, ka);
  const y = sphericalBesselY(lmax, ka);
  const re = new Float64Array(lmax + 1);
  for (let l = 0; l <= lmax; l++) re[l] = Math.atan(j[l] / y[l]);
  return { re, im: new Float64Array(lmax + 1) };
}

describe('multiple-scattering paths of fcc Cu', () => {
  const clusters = buildClusters(fccCu(), { absorber: { element: 'Cu' }, radius: 6.5 });
  const paths = multiplePaths(clusters, { maxHalfLength: 5.5 });

  it('has the 48 first-shell triangle paths at half length 1.5 d, angles 120 degrees, P = -1/2', () => {
    const triangles = paths.filter((p) => p.legs === 3 && Math.abs(p.halfLength - 1.5 * D_CU) < 1e-6);
    expect(triangles).toHaveLength(1);
    const [t] = triangles;
    expect(t.degeneracy).toBe(48);
    // scattering angle 180 - 60 = 120 degrees at both corners; first and last legs at 120 degrees
    for (const c of t.cosAngles) expect(c).toBeCloseTo(-0.5, 9);
    expect(t.polarisation).toBeCloseTo(-0.5, 9);
    for (const l of t.legLengths) expect(l).toBeCloseTo(D_CU, 9);
  });

  it('has the collinear focusing paths at 2 d: 24 double-scattering and 12 four-leg paths', () => {
    const focusing3 = paths.filter((p) => p.legs === 3 && Math.abs(p.halfLength - 2 * D_CU) < 1e-6 && p.cosAngles.some((c) => c > 0.999));
    expect(focusing3).toHaveLength(1);
    expect(focusing3[0].degeneracy).toBe(24); // 12 atoms at 2d, two directions
    expect(focusing3[0].polarisation).toBeCloseTo(-1, 9);
    const focusing4 = paths.filter((p) => p.legs === 4 && p.cosAngles[0] > 0.999);
    expect(focusing4).toHaveLength(1);
    expect(focusing4[0].degeneracy).toBe(12); // its own time reverse
    expect(focusing4[0].cosAngles).toEqual([expect.closeTo(1, 9), -1, expect.closeTo(1, 9)]);
  });

  it('keeps every path within the length limit and sorts by half length', () => {
    for (const p of paths) {
      expect(p.halfLength).toBeLessThanOrEqual(5.5 + 1e-9);
      expect(p.legLengths.reduce((a, b) => a + b, 0) / 2).toBeCloseTo(p.halfLength, 12);
    }
    for (let i = 1; i < paths.length; i++) expect(paths[i].halfLength).toBeGreaterThanOrEqual(paths[i - 1].halfLength);
  });

  it('refuses a cluster smaller than the longest half path', () => {
    const small = buildClusters(fccCu(), { absorber: { element: 'Cu' }, radius: 3 });
    expect(() => multiplePaths(small, { maxHalfLength: 5.5 })).toThrow(/cluster radius/);
  });
});

describe('plane-wave scattering amplitude f(theta)', () => {
  it('tends to -a for a hard sphere at low energy (Sakurai 7.6), to 1e-3 relative at ka = 0.01', () => {
    const a = 1.7;
    const k = 0.01 / a;
    const { re, im } = hardSphere(k * a, 6);
    for (const cos of [1, 0.3, -0.4, -1]) {
      const [fr, fi] = planeWaveScattering(re, im, 6, k, cos);
      expect(fr / -a).toBeCloseTo(1, 3);
      expect(Math.abs(fi / a)).toBeLessThan(0.02); // Im f = -k a^2 to first order
    }
  });

  it('obeys the optical theorem (Sakurai 7.3) to 1e-12 relative', () => {
    const a = 1.2;
    const k = 3.1;
    const lmax = 16;
    const { re, im } = hardSphere(k * a, lmax);
    let sigma = 0;
    for (let l = 0; l <= lmax; l++) sigma += (4 * Math.PI / (k * k)) * (2 * l + 1) * Math.sin(re[l]) ** 2;
    const [, fi] = planeWaveScattering(re, im, lmax, k, 1);
    expect(fi / ((k * sigma) / (4 * Math.PI))).toBeCloseTo(1, 12);
  });

  it('at theta = pi equals the backscattering amplitude of src/scatter/amplitude.ts (1e-12)', () => {
    const re = [0.9, -0.4, 0.7, 0.2, -0.05];
    const im = [0.02, 0.01, 0.03, 0.0, 0.001];
    const [fr, fi] = planeWaveScattering(re, im, 4, 2.3, -1);
    const [br, bi] = planeWaveBackscattering(re, im, 4, 2.3);
    expect(fr).toBeCloseTo(br, 12);
    expect(fi).toBeCloseTo(bi, 12);
  });
});

describe('path factor Z (chi = Im[Z e^{ikL}] / (k R^2), R = L/2)', () => {
  const deltaC = { re: 0.8, im: 0.05 };

  it('reduces for single scattering (P = -1, theta = pi) to -e^{2 i delta_c} f(pi), the sign (-1)^l of the K edge', () => {
    const f: [number, number] = [0.7, -0.3];
    const [zr, zi] = pathFactor(-1, [f], [2.5, 2.5], deltaC.re, deltaC.im);
    const mod = Math.exp(-2 * deltaC.im);
    const er = mod * Math.cos(2 * deltaC.re);
    const ei = mod * Math.sin(2 * deltaC.re);
    expect(zr).toBeCloseTo(-(er * f[0] - ei * f[1]), 12);
    expect(zi).toBeCloseTo(-(er * f[1] + ei * f[0]), 12);
  });

  it('collinear absorber-A-B: SS(B) + 2 DS + the 4-leg path = Z_SS (1 + x)^2, x = 2 f_A(0) / d (our derivation)', () => {
    const d = 4.8; // bohr
    const k = 2.2;
    const { re, im } = hardSphere(k * 1.1, 14);
    const f0 = planeWaveScattering(re, im, 14, k, 1);
    const fpi = planeWaveScattering(re, im, 14, k, -1);
    // the paths as the enumerator finds them in a three-atom line
    const line = makeStructure({ species: ['Cu', 'Cu', 'Cu'], positions: [0, 0, 0, 0, 0, 1, 0, 0, 2] });
    const found = multiplePaths(buildClusters(line, { absorber: { index: 0 }, radius: 2.1 }), { maxHalfLength: 2.0001 });
    const ds = found.find((p) => p.legs === 3);
    const four = found.find((p) => p.legs === 4);
    expect(ds?.degeneracy).toBe(2);
    expect(four?.degeneracy).toBe(1);
    expect(found).toHaveLength(2);
    const scaled = (legs: number[]) => legs.map((x) => x * d);
    const amplitudes = (cos: number[]) => cos.map((c) => (c > 0 ? f0 : fpi));
    const zSS = pathFactor(-1, [fpi], [2 * d, 2 * d], 0, 0);
    const zDS = pathFactor(ds!.polarisation, amplitudes(ds!.cosAngles), scaled(ds!.legLengths), 0, 0);
    const z4 = pathFactor(four!.polarisation, amplitudes(four!.cosAngles), scaled(four!.legLengths), 0, 0);
    const sum: [number, number] = [zSS[0] + 2 * zDS[0] + z4[0], zSS[1] + 2 * zDS[1] + z4[1]];
    const x: [number, number] = [(2 * f0[0]) / d, (2 * f0[1]) / d];
    const onePlusX2: [number, number] = [(1 + x[0]) ** 2 - x[1] ** 2, 2 * (1 + x[0]) * x[1]];
    const expected: [number, number] = [zSS[0] * onePlusX2[0] - zSS[1] * onePlusX2[1], zSS[0] * onePlusX2[1] + zSS[1] * onePlusX2[0]];
    expect(sum[0]).toBeCloseTo(expected[0], 10);
    expect(sum[1]).toBeCloseTo(expected[1], 10);
  });
});

describe('exact curved-wave factor of collinear paths (src/scatter/collinear-paths.ts)', () => {
  const lmax = 12;
  // smooth model phase shifts, complex (absorbing), decaying with l
  const dRe = Array.from({ length: lmax + 1 }, (_, l) => 1.2 * Math.exp(-0.4 * l));
  const dIm = Array.from({ length: lmax + 1 }, (_, l) => 0.05 * Math.exp(-0.5 * l));
  const site = { lmax, deltaRe: dRe, deltaIm: dIm };
  const chain = chainCoefficients(1, lmax);
  const rel = (a: [number, number], b: [number, number]) => Math.hypot(a[0] - b[0], a[1] - b[1]) / Math.hypot(b[0], b[1]);

  it('with one scatterer equals the curved-wave single-scattering Z of src/scatter/amplitude.ts (1e-10)', () => {
    for (const [k, r] of [[2, 4.8], [5, 4.8], [1.3, 9]]) {
      const f = effectiveAmplitude(translationCoefficients(1, lmax), dRe, dIm, lmax, k, r);
      const expected = combineChannels([{ l: 1, weight: 1, centralRe: 0.7, centralIm: 0.02, amplitude: f }]);
      expect(rel(collinearPathFactor(chain, [site], [r, -r], k, 0.7, 0.02), expected)).toBeLessThan(1e-10);
    }
  });

  it('tends to the plane-wave Z for long legs (1 % at 40000 bohr) and differs from it at 4.8 bohr (> 10 %)', () => {
    const k = 3;
    const f0 = planeWaveScattering(dRe, dIm, lmax, k, 1);
    const fpi = planeWaveScattering(dRe, dIm, lmax, k, -1);
    for (const [d, check] of [[40000, 'near'], [4.8, 'far']] as const) {
      const ds = rel(collinearPathFactor(chain, [site, site], [d, d, -2 * d], k, 0.7, 0.02), pathFactor(-1, [f0, fpi], [d, d, 2 * d], 0.7, 0.02));
      const four = rel(collinearPathFactor(chain, [site, site, site], [d, d, -d, -d], k, 0.7, 0.02), pathFactor(-1, [f0, fpi, f0], [d, d, d, d], 0.7, 0.02));
      if (check === 'near') {
        expect(ds).toBeLessThan(0.01);
        expect(four).toBeLessThan(0.01);
      } else {
        expect(ds).toBeGreaterThan(0.1);
        expect(four).toBeGreaterThan(0.1);
      }
    }
  });

  it('recognises collinear paths and their signed legs', () => {
    expect(collinearDisplacements([1, 1, 2], [1, -1], -1)).toEqual([1, 1, -2]);
    expect(collinearDisplacements([1, 2, 1], [-1, -1], 1)).toEqual([1, -2, 1]);
    expect(collinearDisplacements([1, 1, 1, 1], [1, -1, 1], -1)).toEqual([1, 1, -1, -1]);
    expect(collinearDisplacements([1, 1, 1], [-0.5, -0.5], -0.5)).toBeNull();
  });
});

describe('ranking settings: multiple scattering on by default', () => {
  const chi = { k: Float64Array.from([0, 16]) } as unknown as Chi; // only the k range is read
  it('records the default path settings, and none with single scattering asked for', () => {
    expect(resolveSettings({ absorber: { element: 'Cu' } }, chi, 3).multipleScattering).toEqual({ minImportance: 0.04, fourLeg: true });
    expect('multipleScattering' in resolveSettings({ absorber: { element: 'Cu' }, multipleScattering: false }, chi, 3)).toBe(false);
  });
  it('records the path settings when asked for', () => {
    expect(resolveSettings({ absorber: { element: 'Cu' }, multipleScattering: { minImportance: 0.1 } }, chi, 3).multipleScattering)
      .toEqual({ minImportance: 0.1, fourLeg: true });
  });
});

describe('multiple scattering by default: the cases that fall back to single scattering', () => {
  const clusters = buildClusters(fccCu(), { absorber: { element: 'Cu' }, radius: 5.5 });
  const shells = groupShells(clusters);
  const providers = defaultProviders({ cache: false });
  const context = (edge: EdgeName) => ({ absorber: 'Cu', edge, environment: { absorber: [], scatterers: {} }, maxHalfLength: 5.2, kRange: [3, 14] as [number, number], kMax: 15 });
  const tablesOf = shells.map(() => ({}) as never);
  it('says why instead of failing: a provider without multiple-scattering tables, an L3 edge, changed shells', () => {
    // the parametric provider has no computeMultiple (src/scatter/parametric.ts)
    const parametric = multipleScatteringForComponent(providers.get('parametric'), clusters, { paths: shells, tables: tablesOf }, context('K'), DEFAULT_MULTIPLE_SCATTERING);
    expect(parametric.paths).toEqual([]);
    expect(parametric.skipped).toMatch(/parametric provider/);
    // the polarisation average of src/scatter/multiple-scattering.ts is that of a p final state (K, L1)
    const l3 = multipleScatteringForComponent(providers.get('firstPrinciples'), clusters, { paths: shells, tables: tablesOf }, context('L3'), DEFAULT_MULTIPLE_SCATTERING);
    expect(l3.skipped).toMatch(/K and L1 edges only, not L3/);
    const changed = multipleScatteringForComponent(providers.get('firstPrinciples'), null, { paths: shells, tables: tablesOf }, context('K'), DEFAULT_MULTIPLE_SCATTERING);
    expect(changed.skipped).toMatch(/changed shells/);
  });
});
