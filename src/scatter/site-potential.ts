/**
 * The photoelectron's complex, energy-dependent potential inside each muffin-tin sphere and in the
 * interstitial, assembled from a muffin-tin cluster (muffin-tin.ts) and a self-energy model
 * (exchange.ts):
 *   V_s(r, k) = V_coulomb,s(r) + Sigma(rho_s(r), k)   (or Sigma(rho_s, rho_core,s, k) for the
 *               core/valence model of exchange.ts, with the overlapped core density),
 *   V_0(k)    = sum_s w_s V_s(r_s, k)      (surface average, weights w_s = area x abundance),
 *   U_s(r, k) = V_s(r, k) - V_0(k)         (what the phase-shift integration sees),
 * where k^2 / 2 is the photoelectron's energy above the Fermi level, the argument of the local
 * self-energy everywhere (exchange.ts). The caller solves the radial equation in U_s at the
 * interstitial wave number k_int, k_int^2 / 2 = E - Re V_0 (first-principles.ts relates the two).
 * Units: bohr, hartree.
 */
import { prepareSelfEnergyGrid, selfEnergy, selfEnergyOnGrid, type SelfEnergyGrid, type SelfEnergyOptions } from './exchange';
import { siteCoreDensity, siteDensityAndCoulomb, type MuffinTinSite } from './muffin-tin';
import { sphereGrid, type SpherePotential } from './phase-shifts';

/** A site's overlapped density and Coulomb potential sampled on its sphere grid. */
export interface SiteRadial {
  species: string;
  radius: number;
  h: number;
  r: Float64Array;
  density: Float64Array;
  /** Overlapped core density (0 where the atoms give none), electrons/bohr^3. */
  coreDensity: Float64Array;
  coulomb: Float64Array;
  surfaceDensity: number;
  surfaceCoreDensity: number;
  surfaceCoulomb: number;
  weight: number;
  /** The density prepared for fast self-energies. */
  selfEnergyGrid: SelfEnergyGrid;
}

export function siteRadial(site: MuffinTinSite, h = 0.01, rMin = 1e-5): SiteRadial {
  const r = sphereGrid(site.radius, h, rMin);
  const density = new Float64Array(r.length);
  const coulomb = new Float64Array(r.length);
  const coreDensity = new Float64Array(r.length);
  const hasCore = site.spec.atom.coreRho !== null || site.spec.neighbours.some((nb) => nb.atom.coreRho !== null);
  for (let i = 0; i < r.length; i++) {
    const v = siteDensityAndCoulomb(site.spec, r[i]);
    density[i] = v.density;
    coulomb[i] = v.coulomb;
    if (hasCore) coreDensity[i] = siteCoreDensity(site.spec, r[i]);
  }
  return {
    species: site.species,
    radius: site.radius,
    h,
    r,
    density,
    coreDensity,
    coulomb,
    surfaceDensity: site.surfaceDensity,
    surfaceCoreDensity: site.surfaceCoreDensity,
    surfaceCoulomb: site.surfaceCoulomb,
    weight: site.interstitialWeight,
    selfEnergyGrid: prepareSelfEnergyGrid(density, hasCore ? coreDensity : null),
  };
}

/** Complex interstitial level V_0(k) = [re, im], hartree, at energy k^2/2 above the Fermi level. */
export function interstitialLevel(sites: readonly SiteRadial[], k: number, options: SelfEnergyOptions): [number, number] {
  let re = 0;
  let im = 0;
  const sigma: [number, number] = [0, 0];
  for (const s of sites) {
    selfEnergy(s.surfaceDensity, k, options, sigma, s.surfaceCoreDensity);
    re += s.weight * (s.surfaceCoulomb + sigma[0]);
    im += s.weight * sigma[1];
  }
  return [re, im];
}

/**
 * U_s(r, k) = V_s(r, k) - V_0(k) on the site's sphere grid at energy k^2/2 above the Fermi level
 * (writes into `out` when given).
 */
export function sphereAtEnergy(site: SiteRadial, k: number, options: SelfEnergyOptions, v0: [number, number], out?: SpherePotential): SpherePotential {
  const n = site.r.length;
  const pot: SpherePotential = out ?? { radius: site.radius, h: site.h, r: site.r, re: new Float64Array(n), im: new Float64Array(n) };
  selfEnergyOnGrid(site.selfEnergyGrid, k, options, pot.re, pot.im);
  for (let i = 0; i < n; i++) {
    pot.re[i] += site.coulomb[i] - v0[0];
    pot.im[i] -= v0[1];
  }
  return pot;
}
