/**
 * Overlapped-density muffin-tin potentials on hydrogenic stand-in atoms, against closed forms and
 * brute-force quadratures: the hydrogen 1s electrostatic potential V(r) = -(1 + 1/r) e^{-2r}
 * (e.g. Bransden and Joachain, Physics of Atoms and Molecules, the 1s Hartree potential), the
 * Mattheiss spherical average checked against direct angular quadrature of the displaced density
 * (brute-force oracle), and the Norman radius against a brute-force charge integration.
 */
import { describe, expect, it } from 'vitest';
import {
  atomIntegrals,
  averagedDensity,
  averagedPotential,
  buildMuffinTins,
  normanRadius,
  siteDensityAndCoulomb,
  type SiteSpec,
} from '../src/scatter/muffin-tin';

function hydrogenic(z: number, electrons: number, exponent = z) {
  // 1s density with exponent alpha: rho = electrons alpha^3/pi e^{-2 alpha r}, nuclear charge z
  const h = 0.01;
  const r0 = 1e-6;
  const n = Math.ceil(Math.log(60 / exponent / r0) / h);
  const r = new Float64Array(n);
  const density = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    r[i] = r0 * Math.exp(i * h);
    density[i] = (electrons * exponent ** 3 * Math.exp(-2 * exponent * r[i])) / Math.PI;
  }
  return { z, r, density };
}

/** Brute-force oracle: (1/2) ∫_{-1}^{1} g(|r n - d z|) dmu by Simpson with many points. */
function angularAverage(g: (t: number) => number, r: number, d: number, n = 20000): number {
  let s = 0;
  for (let i = 0; i <= n; i++) {
    const mu = -1 + (2 * i) / n;
    const w = i === 0 || i === n ? 1 : i % 2 ? 4 : 2;
    s += w * g(Math.sqrt(Math.max(r * r + d * d - 2 * r * d * mu, 1e-300)));
  }
  return (0.5 * s * (2 / n)) / 3;
}

describe('atomic integrals of a hydrogen 1s density', () => {
  const a = atomIntegrals(hydrogenic(1, 1));
  it('holds one electron (to 1e-9)', () => {
    expect(Math.abs(a.electrons - 1)).toBeLessThan(1e-9);
  });
  it('electrostatic potential r V(r) = -(1 + r) e^{-2r} (closed form) to 1e-7 (fourth-order running integrals, log step 0.01)', () => {
    for (const i of [100, 800, 1200, 1400, 1500]) {
      const r = 1e-6 * Math.exp(i * 0.01);
      expect(Math.abs(a.rv[i] + (1 + r) * Math.exp(-2 * r))).toBeLessThan(1e-7);
    }
  });
});

describe('Mattheiss spherical average against angular quadrature (brute-force oracle)', () => {
  const atom = hydrogenic(1, 1, 1.3); // neutral: Z = 1, one electron with exponent 1.3
  const a = atomIntegrals(atom);
  const rho = (t: number) => (1.3 ** 3 / Math.PI) * Math.exp(-2 * 1.3 * t);
  const vEs = (t: number) => -(1 / t + 1.3) * Math.exp(-2 * 1.3 * t); // scaled 1s potential, Z = 1
  it('density average to 1e-6 relative at several r for d = 2.5 bohr', () => {
    for (const r of [0.01, 0.4, 1.2, 2.4, 2.6, 3.5]) {
      const ref = angularAverage(rho, r, 2.5);
      expect(Math.abs(averagedDensity(a, r, 2.5) / ref - 1)).toBeLessThan(1e-6);
    }
  });
  it('electrostatic-potential average to 1e-5 relative (the integrand is singular at t = 0)', () => {
    for (const r of [0.3, 1.1, 2.0, 3.1]) {
      const ref = angularAverage(vEs, r, 2.5);
      expect(Math.abs(averagedPotential(a, r, 2.5) / ref - 1)).toBeLessThan(1e-5);
    }
  });
});

describe('Norman radius and muffin-tin spheres', () => {
  const a = atomIntegrals(hydrogenic(1, 1));
  const d = 2.0;
  const site: SiteSpec = { species: 'H', atom: a, neighbours: [{ species: 'H', atom: a, distance: d, count: 1 }] };
  it('Norman radius of an H2-like pair equals the brute-force radius holding Z = 1 electron (to 1e-4 bohr)', () => {
    const rho = (t: number) => Math.exp(-2 * t) / Math.PI;
    const charge = (R: number) => {
      const n = 200;
      let s = 0;
      for (let i = 0; i <= n; i++) {
        const r = (R * i) / n;
        const w = i === 0 || i === n ? 1 : i % 2 ? 4 : 2;
        s += w * 4 * Math.PI * r * r * (rho(r) + (r > 0 ? angularAverage(rho, r, d, 2000) : rho(d)));
      }
      return (s * (R / n)) / 3;
    };
    let lo = 0.3;
    let hi = 2.0;
    for (let it = 0; it < 25; it++) {
      const mid = 0.5 * (lo + hi);
      if (charge(mid) < 1) lo = mid;
      else hi = mid;
    }
    expect(Math.abs(normanRadius(site) - 0.5 * (lo + hi))).toBeLessThan(1e-4);
  });
  it('identical neighbours get spheres of (1 + overlap) d / 2 and the interstitial level is their surface value', () => {
    const cluster = buildMuffinTins([site], { overlap: 0.1 });
    expect(cluster.sites[0].radius).toBeCloseTo(1.1, 12);
    const surf = siteDensityAndCoulomb(site, 1.1);
    expect(cluster.interstitialDensity).toBeCloseTo(surf.density, 12);
  });
  it('the absorber (site 0, here a more compact stand-in for a core-hole atom) does not lend its Norman radius to the ground-state neighbours of the other sites: radii follow r_s = (1 + overlap) d N_s / (N_s + N_j) with N_j of the ground-state site (Norman 1976 pair rule as the module states it)', () => {
    const ground = atomIntegrals(hydrogenic(1, 1));
    const excited = atomIntegrals(hydrogenic(1, 1, 1.4));
    const nb = { species: 'H', atom: ground, distance: d, count: 1 };
    const absorber: SiteSpec = { species: 'H', atom: excited, neighbours: [nb] };
    const scatterer: SiteSpec = { species: 'H', atom: ground, neighbours: [nb] };
    const cluster = buildMuffinTins([absorber, scatterer], { overlap: 0.1 });
    const [na, ns] = cluster.sites.map((x) => x.normanRadius);
    expect(Math.abs(na - ns)).toBeGreaterThan(0.01); // the stand-ins really differ
    expect(cluster.sites[1].radius).toBeCloseTo((1.1 * d) / 2, 12);
    expect(cluster.sites[0].radius).toBeCloseTo((1.1 * d * na) / (na + ns), 12);
  });
  it('overlapped Coulomb potential of a neutral pair is below the free atom inside the sphere (neighbour nucleus attracts)', () => {
    for (const r of [0.3, 0.8]) {
      expect(siteDensityAndCoulomb(site, r).coulomb).toBeLessThan(a.rv[0] === -1 ? -(1 / r + 1) * Math.exp(-2 * r) : 0);
    }
  });
});
