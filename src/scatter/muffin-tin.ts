/**
 * Cluster potentials in the muffin-tin form, built from overlapped atomic densities.
 *
 * Mattheiss prescription (Mattheiss, Phys. Rev. 133, A1399 (1964)): the density and the electrostatic
 * potential at a site are its own atom's plus the spherical averages, about the site, of those of
 * its neighbours. For a spherical function g centred at distance d the average over a sphere of
 * radius r about the site is
 *   <g>(r) = 1 / (2 r d) ∫_{|d - r|}^{d + r} g(t) t dt,
 * evaluated here from the running integrals F(t) = ∫_0^t rho(s) s ds and G(t) = ∫_0^t V_es(s) s ds.
 * Each neutral atom's electrostatic potential comes from its density by the radial Poisson integrals
 *   V_es(r) = -Z/r + Q(r)/r + 4 pi ∫_r^∞ rho(s) s ds,  Q(r) = ∫_0^r 4 pi s^2 rho(s) ds
 * (spherical averaging commutes with the Laplacian, so averaging each neighbour's potential is the
 * same as solving Poisson's equation for the averaged total density).
 * The ground-state exchange-correlation potential is the LDA of the overlapped density.
 * The core part of the density (the atoms' core shells, when an atom gives it) is overlapped the
 * same way, for the photoelectron self-energy that treats core and valence electrons apart
 * (./exchange).
 *
 * Sphere radii: Norman radii (Norman, Mol. Phys. 31, 1191 (1976)), the radius at which the
 * overlapped density of a site holds the site's nuclear charge Z, scaled pairwise so that a site and
 * its nearest neighbour overlap by the fraction `overlap` of their distance:
 *   r_s = min over neighbours j of (1 + overlap) d_sj N_s / (N_s + N_j)
 * (N_j = the Norman radius of the neighbour's species as a site of the cluster, else N_s; the
 * neighbours are ground-state atoms, so a species that is both the absorber, site 0, whose atom may
 * carry a core hole, and another site takes the other site's radius).
 *
 * Interstitial level: the average of the potential over the sphere surfaces, each site weighted by
 * its sphere area r_s^2 times its abundance. This is applied at every photoelectron energy to the
 * complex, energy-dependent potential (see site-potential.ts).
 *
 * Units: bohr, hartree, electrons/bohr^3.
 */
import { ComputationError, InputError } from '../core/errors';
import { ldaExchangeCorrelationPotential } from './lda';

/** A spherical neutral atom: nuclear charge and density on a logarithmic grid. */
export interface AtomicDensity {
  z: number;
  /** Radii, bohr, on a uniform logarithmic grid r_i = r_0 exp(i h). */
  r: Float64Array;
  /** Spherical electron density, electrons/bohr^3. */
  density: Float64Array;
  /** The part of `density` in core shells (same grid), electrons/bohr^3; absent = no core. */
  coreDensity?: Float64Array;
}

/** Running integrals of one atom, ready for spherical averages about displaced centres. */
export interface AtomIntegrals {
  z: number;
  r0: number;
  h: number;
  n: number;
  /** F(t) = ∫_0^t rho s ds at the grid points. */
  f: Float64Array;
  /** G(t) = ∫_0^t V_es s ds at the grid points. */
  g: Float64Array;
  /** r V_es(r) at the grid points (-> -Z at the origin). */
  rv: Float64Array;
  /** rho at the grid points. */
  rho: Float64Array;
  /** Total electron count ∫ 4 pi r^2 rho dr. */
  electrons: number;
  /** Core density at the grid points and its running integral ∫_0^t rho_core s ds; null = no core. */
  coreRho: Float64Array | null;
  coreF: Float64Array | null;
}

/** Cumulative ∫_{x_0}^{x_i} y dx on a uniform grid of step h, fourth order (y_0 at the start). */
function cumulative(y: Float64Array, h: number, start: number): Float64Array {
  const n = y.length;
  const out = new Float64Array(n);
  out[0] = start;
  for (let i = 0; i < n - 1; i++) {
    // ∫_{x_i}^{x_{i+1}} y = h (5 y_i + 8 y_{i+1} - y_{i+2}) / 12 (or the mirrored form at the end)
    const piece = i + 2 < n ? (h * (5 * y[i] + 8 * y[i + 1] - y[i + 2])) / 12 : (h * (5 * y[i + 1] + 8 * y[i] - y[i - 1])) / 12;
    out[i + 1] = out[i] + piece;
  }
  return out;
}

/** Precompute the running integrals of an atom (checks the grid is logarithmic). */
export function atomIntegrals(atom: AtomicDensity): AtomIntegrals {
  const { r, density } = atom;
  const n = r.length;
  if (n < 10 || density.length !== n) throw new InputError(`atomic density needs matching r and density arrays of at least 10 points (got ${n} and ${density.length})`);
  const h = Math.log(r[1] / r[0]);
  if (!(h > 0) || Math.abs(Math.log(r[n - 1] / r[n - 2]) - h) > 1e-6 * h) throw new InputError('atomic density must be on a uniform logarithmic grid');
  // Q: ∫ 4 pi s^2 rho ds = ∫ 4 pi s^3 rho dx
  const yq = new Float64Array(n);
  const yf = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    yq[i] = 4 * Math.PI * r[i] ** 3 * density[i];
    yf[i] = r[i] * r[i] * density[i];
  }
  const q = cumulative(yq, h, (4 * Math.PI * density[0] * r[0] ** 3) / 3);
  const f = cumulative(yf, h, (density[0] * r[0] * r[0]) / 2);
  const fInf = f[n - 1];
  const rv = new Float64Array(n);
  for (let i = 0; i < n; i++) rv[i] = -atom.z + q[i] + 4 * Math.PI * r[i] * (fInf - f[i]);
  // G: ∫ V s ds = ∫ (r V) r dx
  const yg = new Float64Array(n);
  for (let i = 0; i < n; i++) yg[i] = rv[i] * r[i];
  const g = cumulative(yg, h, rv[0] * r[0]);
  let coreRho: Float64Array | null = null;
  let coreF: Float64Array | null = null;
  if (atom.coreDensity) {
    if (atom.coreDensity.length !== n) throw new InputError(`core density needs ${n} points like the density (got ${atom.coreDensity.length})`);
    coreRho = atom.coreDensity;
    const yc = new Float64Array(n);
    for (let i = 0; i < n; i++) yc[i] = r[i] * r[i] * coreRho[i];
    coreF = cumulative(yc, h, (coreRho[0] * r[0] * r[0]) / 2);
  }
  return { z: atom.z, r0: r[0], h, n, f, g, rv, rho: density, electrons: q[n - 1], coreRho, coreF };
}

/** Four-point Lagrange interpolation of a grid column at radius t (log grid), clamped at the ends. */
function interpolateLog(a: AtomIntegrals, column: Float64Array, t: number): number {
  const x = Math.log(t / a.r0) / a.h;
  let i = Math.floor(x) - 1;
  if (i < 0) i = 0;
  if (i > a.n - 4) i = a.n - 4;
  const s = x - i;
  const c0 = column[i];
  const c1 = column[i + 1];
  const c2 = column[i + 2];
  const c3 = column[i + 3];
  return (
    (-c0 * (s - 1) * (s - 2) * (s - 3)) / 6 + (c1 * s * (s - 2) * (s - 3)) / 2 - (c2 * s * (s - 1) * (s - 3)) / 2 + (c3 * s * (s - 1) * (s - 2)) / 6
  );
}

function runningIntegral(a: AtomIntegrals, rho: Float64Array, f: Float64Array, t: number): number {
  if (t <= a.r0) return (rho[0] * t * t) / 2;
  const rMax = a.r0 * Math.exp((a.n - 1) * a.h);
  if (t >= rMax) return f[a.n - 1];
  return interpolateLog(a, f, t);
}

function runningF(a: AtomIntegrals, t: number): number {
  return runningIntegral(a, a.rho, a.f, t);
}

function runningG(a: AtomIntegrals, t: number): number {
  if (t <= a.r0) return a.rv[0] * t;
  const rMax = a.r0 * Math.exp((a.n - 1) * a.h);
  if (t >= rMax) return a.g[a.n - 1]; // neutral atom: V_es ~ 0 beyond the grid
  return interpolateLog(a, a.g, t);
}

/** The atom's own density at r (interpolated; 0 beyond the grid). */
export function atomDensityAt(a: AtomIntegrals, t: number): number {
  const rMax = a.r0 * Math.exp((a.n - 1) * a.h);
  if (t >= rMax) return 0;
  if (t <= a.r0) return a.rho[0];
  return Math.max(0, interpolateLog(a, a.rho, t));
}

/** The atom's own core density at r (interpolated; 0 beyond the grid or without a core). */
export function atomCoreDensityAt(a: AtomIntegrals, t: number): number {
  if (!a.coreRho) return 0;
  const rMax = a.r0 * Math.exp((a.n - 1) * a.h);
  if (t >= rMax) return 0;
  if (t <= a.r0) return a.coreRho[0];
  return Math.max(0, interpolateLog(a, a.coreRho, t));
}

/** Mattheiss average of the core density (as {@link averagedDensity}); 0 without a core. */
export function averagedCoreDensity(a: AtomIntegrals, r: number, d: number): number {
  if (!a.coreRho || !a.coreF) return 0;
  if (r < 1e-6 * d) return atomCoreDensityAt(a, d);
  return Math.max(0, (runningIntegral(a, a.coreRho, a.coreF, d + r) - runningIntegral(a, a.coreRho, a.coreF, Math.abs(d - r))) / (2 * r * d));
}

/** The atom's own electrostatic potential times r, at r (-> -Z at 0, 0 beyond the grid). */
export function atomRvAt(a: AtomIntegrals, t: number): number {
  const rMax = a.r0 * Math.exp((a.n - 1) * a.h);
  if (t >= rMax) return a.rv[a.n - 1];
  if (t <= a.r0) return a.rv[0];
  return interpolateLog(a, a.rv, t);
}

/**
 * Mattheiss spherical average about the origin, at radius r, of a spherical density centred at
 * distance d: 1/(2 r d) ∫_{|d-r|}^{d+r} rho(t) t dt.
 */
export function averagedDensity(a: AtomIntegrals, r: number, d: number): number {
  if (r < 1e-6 * d) return atomDensityAt(a, d); // limit r -> 0
  return (runningF(a, d + r) - runningF(a, Math.abs(d - r))) / (2 * r * d);
}

/** Same average of the neutral atom's electrostatic potential. */
export function averagedPotential(a: AtomIntegrals, r: number, d: number): number {
  if (r < 1e-6 * d) return atomRvAt(a, d) / d;
  return (runningG(a, d + r) - runningG(a, Math.abs(d - r))) / (2 * r * d);
}

/** A neighbour shell of a site: an atom, its distance (bohr) and how many. */
export interface SiteNeighbour {
  /** Identifies the species (used to find its Norman radius among the cluster's sites). */
  species: string;
  atom: AtomIntegrals;
  distance: number;
  count: number;
}

/** One site of the cluster: its own atom (core-hole atom for the absorber) and its neighbours. */
export interface SiteSpec {
  species: string;
  atom: AtomIntegrals;
  neighbours: SiteNeighbour[];
  /** Weight of this site in the interstitial average (abundance); default 1. */
  weight?: number;
}

/** Overlapped density and Coulomb potential of a site at radius r (bohr). */
export function siteDensityAndCoulomb(site: SiteSpec, r: number): { density: number; coulomb: number } {
  let density = atomDensityAt(site.atom, r);
  let coulomb = atomRvAt(site.atom, r) / r;
  for (const nb of site.neighbours) {
    density += nb.count * averagedDensity(nb.atom, r, nb.distance);
    coulomb += nb.count * averagedPotential(nb.atom, r, nb.distance);
  }
  return { density, coulomb };
}

/** Overlapped core density of a site at radius r (bohr), electrons/bohr^3 (0 for atoms without a core). */
export function siteCoreDensity(site: SiteSpec, r: number): number {
  let core = atomCoreDensityAt(site.atom, r);
  for (const nb of site.neighbours) core += nb.count * averagedCoreDensity(nb.atom, r, nb.distance);
  return core;
}

/**
 * Norman radius of a site: the radius at which ∫_0^r 4 pi s^2 rho_overlapped ds = Z.
 * ComputationError when the charge Z is not reached inside the nearest-neighbour distance.
 */
export function normanRadius(site: SiteSpec, h = 0.005): number {
  if (site.neighbours.length === 0) throw new InputError(`site ${site.species} has no neighbours: a Norman radius needs an environment`);
  const dMin = Math.min(...site.neighbours.map((nb) => nb.distance));
  const rStart = 1e-6;
  const n = Math.ceil(Math.log((1.5 * dMin) / rStart) / h) + 1;
  let charge = (4 * Math.PI * siteDensityAndCoulomb(site, rStart).density * rStart ** 3) / 3;
  let previous = rStart ** 3 * siteDensityAndCoulomb(site, rStart).density * 4 * Math.PI;
  for (let i = 1; i < n; i++) {
    const r = rStart * Math.exp(i * h);
    const y = 4 * Math.PI * r ** 3 * siteDensityAndCoulomb(site, r).density;
    const next = charge + 0.5 * h * (y + previous);
    if (next >= site.atom.z) {
      const frac = (site.atom.z - charge) / (next - charge);
      return rStart * Math.exp((i - 1 + frac) * h);
    }
    charge = next;
    previous = y;
  }
  throw new ComputationError(`the overlapped density of ${site.species} does not hold Z = ${site.atom.z} electrons within 1.5 x the nearest-neighbour distance`);
}

/** A site with its sphere radius and the overlapped density and Coulomb potential inside. */
export interface MuffinTinSite {
  species: string;
  spec: SiteSpec;
  normanRadius: number;
  /** Muffin-tin sphere radius, bohr. */
  radius: number;
  /** Density, core density and Coulomb potential at the sphere surface. */
  surfaceDensity: number;
  surfaceCoreDensity: number;
  surfaceCoulomb: number;
  /** Interstitial weight r^2 x abundance (normalised over the cluster). */
  interstitialWeight: number;
}

export interface MuffinTinOptions {
  /** Fractional overlap of touching spheres (0.1 = 10 % of the distance). Default 0.1. */
  overlap?: number;
}

export interface MuffinTinCluster {
  sites: MuffinTinSite[];
  overlap: number;
  /** Ground-state interstitial level: surface average of Coulomb + LDA xc, hartree. */
  groundStateInterstitial: number;
  /** Surface-averaged density, electrons/bohr^3. */
  interstitialDensity: number;
}

/** Build the muffin-tin spheres of a set of sites (the absorber first, by convention). */
export function buildMuffinTins(specs: SiteSpec[], options: MuffinTinOptions = {}): MuffinTinCluster {
  const overlap = options.overlap ?? 0.1;
  if (!(overlap >= 0 && overlap < 0.5)) throw new InputError(`muffin-tin overlap must be in [0, 0.5), got ${overlap}`, { key: 'overlap' });
  const norman = specs.map((s) => normanRadius(s));
  // A neighbour is an atom of the environment, not the absorber (site 0, a core-hole atom): its
  // Norman radius is that of the first other site of its species, the absorber's only if none.
  const bySpecies = new Map<string, number>();
  specs.forEach((s, i) => {
    if (i > 0 && !bySpecies.has(s.species)) bySpecies.set(s.species, norman[i]);
  });
  if (specs.length > 0 && !bySpecies.has(specs[0].species)) bySpecies.set(specs[0].species, norman[0]);
  const radii = specs.map((s, i) => {
    let best = Infinity;
    for (const nb of s.neighbours) {
      const nj = bySpecies.get(nb.species) ?? norman[i];
      best = Math.min(best, ((1 + overlap) * nb.distance * norman[i]) / (norman[i] + nj));
    }
    return best;
  });
  const raw = specs.map((s, i) => radii[i] * radii[i] * (s.weight ?? 1));
  const total = raw.reduce((a, b) => a + b, 0);
  const sites: MuffinTinSite[] = specs.map((s, i) => {
    const surf = siteDensityAndCoulomb(s, radii[i]);
    return {
      species: s.species,
      spec: s,
      normanRadius: norman[i],
      radius: radii[i],
      surfaceDensity: surf.density,
      surfaceCoreDensity: Math.min(siteCoreDensity(s, radii[i]), surf.density),
      surfaceCoulomb: surf.coulomb,
      interstitialWeight: raw[i] / total,
    };
  });
  let v0 = 0;
  let rho0 = 0;
  for (const s of sites) {
    v0 += s.interstitialWeight * (s.surfaceCoulomb + ldaExchangeCorrelationPotential(s.surfaceDensity));
    rho0 += s.interstitialWeight * s.surfaceDensity;
  }
  return { sites, overlap, groundStateInterstitial: v0, interstitialDensity: rho0 };
}
