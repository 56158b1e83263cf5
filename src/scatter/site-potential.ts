/**
 * The photoelectron's complex, energy-dependent potential inside each muffin-tin sphere and in the
 * interstitial, assembled from a muffin-tin cluster (muffin-tin.ts) and a self-energy model
 * (exchange.ts):
 *   V_s(r, k) = V_coulomb,s(r) + Sigma(rho_s(r), k),
 *   V_0(k)    = sum_s w_s V_s(r_s, k)      (surface average, weights w_s = area x abundance),
 *   U_s(r, k) = V_s(r, k) - V_0(k)         (what the phase-shift integration sees).
 * The interstitial wave number of the photoelectron is k itself: k^2 / 2 = E - Re V_0(k), i.e. the
 * energy zero of the EXAFS k scale sits at the interstitial level (an offset is what the fit's e0
 * absorbs). Units: bohr, hartree.
 */
import { plasmonPoleImaginary, selfEnergy, fermiMomentum, type SelfEnergyOptions } from './exchange';
import { siteDensityAndCoulomb, type MuffinTinSite } from './muffin-tin';
import { sphereGrid, type SpherePotential } from './phase-shifts';

/** A site's overlapped density and Coulomb potential sampled on its sphere grid. */
export interface SiteRadial {
  species: string;
  radius: number;
  h: number;
  r: Float64Array;
  density: Float64Array;
  coulomb: Float64Array;
  surfaceDensity: number;
  surfaceCoulomb: number;
  weight: number;
}

export function siteRadial(site: MuffinTinSite, h = 0.01, rMin = 1e-5): SiteRadial {
  const r = sphereGrid(site.radius, h, rMin);
  const density = new Float64Array(r.length);
  const coulomb = new Float64Array(r.length);
  for (let i = 0; i < r.length; i++) {
    const v = siteDensityAndCoulomb(site.spec, r[i]);
    density[i] = v.density;
    coulomb[i] = v.coulomb;
  }
  return {
    species: site.species,
    radius: site.radius,
    h,
    r,
    density,
    coulomb,
    surfaceDensity: site.surfaceDensity,
    surfaceCoulomb: site.surfaceCoulomb,
    weight: site.interstitialWeight,
  };
}

/**
 * Im Sigma(rho) at fixed k tabulated on ln rho (1e-6 .. 1e3 electrons/bohr^3, 160 nodes) and
 * interpolated linearly: the plasmon-pole integral is too slow to evaluate at every grid point.
 */
export function lossTable(k: number, options: SelfEnergyOptions): (rho: number) => number {
  if (options.losses === 'none') return () => 0;
  const n = 160;
  const lo = Math.log(1e-6);
  const hi = Math.log(1e3);
  const step = (hi - lo) / (n - 1);
  const table = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const rho = Math.exp(lo + i * step);
    const kf = fermiMomentum(rho);
    table[i] = plasmonPoleImaginary(rho, Math.sqrt(k * k + kf * kf));
  }
  return (rho: number) => {
    if (!(rho > 1e-6)) return 0;
    const x = (Math.log(rho) - lo) / step;
    if (x >= n - 1) return table[n - 1];
    const i = Math.floor(x);
    const f = x - i;
    return table[i] * (1 - f) + table[i + 1] * f;
  };
}

/** Complex interstitial level V_0(k) = [re, im], hartree. */
export function interstitialLevel(sites: readonly SiteRadial[], k: number, options: SelfEnergyOptions, losses = lossTable(k, options)): [number, number] {
  let re = 0;
  let im = 0;
  for (const s of sites) {
    const [sr] = selfEnergy(s.surfaceDensity, k, { ...options, losses: 'none' });
    re += s.weight * (s.surfaceCoulomb + sr);
    im += s.weight * losses(s.surfaceDensity);
  }
  return [re, im];
}

/** U_s(r, k) = V_s(r, k) - V_0(k) on the site's sphere grid (writes into `out` when given). */
export function sphereAtEnergy(site: SiteRadial, k: number, options: SelfEnergyOptions, v0: [number, number], losses = lossTable(k, options), out?: SpherePotential): SpherePotential {
  const n = site.r.length;
  const pot: SpherePotential = out ?? { radius: site.radius, h: site.h, r: site.r, re: new Float64Array(n), im: new Float64Array(n) };
  const realOnly: SelfEnergyOptions = { ...options, losses: 'none' };
  for (let i = 0; i < n; i++) {
    const rho = site.density[i];
    const [sr] = selfEnergy(rho, k, realOnly);
    pot.re[i] = site.coulomb[i] + sr - v0[0];
    pot.im[i] = losses(rho) - v0[1];
  }
  return pot;
}
