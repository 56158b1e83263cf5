/**
 * Energy-dependent exchange-correlation (self-energy) of the photoelectron in a local-density
 * picture: at each point the electron sees the self-energy of a homogeneous electron gas of the local
 * density rho(r), evaluated at the local momentum p(r) = sqrt(k^2 + k_F(r)^2), where k^2 / 2 is the
 * photoelectron's energy above the Fermi level (the same everywhere) and k_F = (3 pi^2 rho)^(1/3)
 * (hartree atomic units). This is the local-density use of the electron-gas self-energy of Hedin and
 * Lundqvist (J. Phys. C 4, 2064 (1971)).
 *
 * Real part, model 'hedin-lundqvist': the GW self-energy of the electron gas with
 * Lundqvist's single-plasmon-pole screening, exchange plus correlation, evaluated on shell
 * (./hedin-lundqvist derives and computes it). At the Fermi level it is close to the LDA
 * exchange-correlation potential; it tends to zero at high energy.
 *
 * Real part, model 'dirac-hara': the Dirac-Hara exchange (Hara, J. Phys. Soc. Japan 22, 710 (1967);
 * the Hartree-Fock exchange of the electron gas at momentum p, Slater, Phys. Rev. 81, 385 (1951)):
 *   Re Sigma = -(k_F / pi) [ 1 + (1 - x^2) / (2x) ln |(1 + x) / (1 - x)| ],   x = p / k_F,
 * equal to the Kohn-Sham exchange -(3 rho / pi)^(1/3) at the Fermi level (x = 1) and falling off
 * as -2 k_F^3 / (3 pi p^2) at high energy. It is the exchange part of the Hedin-Lundqvist
 * self-energy, without correlation. Model 'ground-state-lda' uses the energy-independent LDA
 * exchange-correlation potential instead (for comparison).
 *
 * Real part, model 'valence-hedin-lundqvist' (the default of ./first-principles): the electron-gas
 * picture treats every electron as a member of one gas that screens by plasmons, which is sound
 * for the valence electrons but not for
 * tightly bound core shells, whose binding energies (tens of eV to keV) lie far above the
 * plasmon energies that dominate the plasmon-pole correlation at the local density. Splitting the
 * density into core and valence parts, rho = rho_c + rho_v, we keep the dynamically screened
 * (GW, plasmon-pole) self-energy for the valence gas and give the core electrons only their bare
 * exchange with the photoelectron, unscreened and without correlation (they are too tightly bound
 * to be polarised at these energies):
 *   Sigma(r, E) = Sigma_HL(rho_v(r); E - E_F) + Sigma_x^core(r, E),
 *   Sigma_x^core = -(k_c / pi) [ 1 + (1 - y^2) / (2y) ln |(1 + y) / (1 - y)| ],
 *   k_c = (3 pi^2 rho_c)^(1/3),  y = p / k_c,  p^2 = k^2 + k_F(rho)^2,
 * i.e. the Dirac-Hara (local Hartree-Fock) exchange of the core density, evaluated at the
 * photoelectron's local momentum p in the full density (the same local momentum the other models
 * use; p >= k_c always, so the core Fermi sphere is never entered). Our derivation of the form: the
 * Fock exchange term is linear in the occupied orbitals, so the core shells' share of it separates
 * exactly; it is then taken in the local (plane-wave, Slater) approximation, which is what the
 * Dirac-Hara formula is. The losses (imaginary part) come from the valence gas alone: core
 * excitations are not plasmons. This core/valence partition of the EXAFS self-energy, with
 * Hartree-Fock-like exchange for the core and the plasmon-pole self-energy for the valence, is
 * the one discussed in the literature on EXAFS theory (from memory: Rehr and Albers, Rev. Mod.
 * Phys. 72, 621 (2000), section on self-energy; Mustre de Leon, Rehr, Zabinsky and Albers, Phys.
 * Rev. B 44, 4146 (1991)). Limits: with rho_c = 0 it is exactly 'hedin-lundqvist'; at high energy
 * Sigma_HL(rho_v) -> 0 and Sigma_x^core -> -2 k_c^3 / (3 pi p^2) = -2 pi rho_c / p^2 -> 0; at
 * the Fermi level it is the valence HL plus the core's Slater exchange at y = k_F / k_c. Which
 * electrons are core is the caller's choice (./first-principles: the closed shells of the
 * preceding noble gas). Without a core density (none given) the model is 'hedin-lundqvist'.
 *
 * Imaginary part (losses), model 'plasmon-pole': the on-shell plasmon-emission rate of the same
 * single-plasmon-pole model (the imaginary part of the Hedin-Lundqvist self-energy), dispersion
 *   w_q^2 = w_p^2 + (v_F^2 / 3) q^2 + q^4 / 4,   w_p^2 = 4 pi rho,   v_F = k_F,
 * (Lundqvist, Phys. Kondens. Materie 6, 193 (1967); Hedin and Lundqvist, Solid State Physics 23, 1
 * (1969)). The golden-rule rate with Im eps^-1(q, w) = -(pi w_p^2 / (2 w_q)) delta(w - w_q) gives,
 * after the angular integral (our derivation),
 *   Im Sigma(p) = -(w_p^2 / (2 p)) ∫ dq / (q w_q)
 * over the q where emission is kinematically allowed: w_q + q^2/2 <= p q (momentum) and
 * w_q <= (p^2 - k_F^2)/2 (the electron stays above the Fermi level). No losses below the plasmon
 * threshold; electron-hole excitations are not in the single-pole model.
 * {@link plasmonPoleImaginary} evaluates this directly; {@link selfEnergy} uses the table of
 * ./hedin-lundqvist (same integral, interpolated).
 */
import { hedinLundqvistInterpolated, hedinLundqvistOnGrid, prepareGas, type PreparedGas } from './hedin-lundqvist';
import { InputError } from '../core/errors';
import { ldaExchangeCorrelationPotential } from './lda';

/** Which real part: Hedin-Lundqvist, Dirac-Hara (both energy dependent) or the ground-state LDA potential. */
export type ExchangeModel = 'hedin-lundqvist' | 'valence-hedin-lundqvist' | 'dirac-hara' | 'ground-state-lda';
export const EXCHANGE_MODELS: readonly ExchangeModel[] = ['hedin-lundqvist', 'valence-hedin-lundqvist', 'dirac-hara', 'ground-state-lda'];
/** Which loss model for the imaginary part. */
export type LossModel = 'plasmon-pole' | 'none';
export const LOSS_MODELS: readonly LossModel[] = ['plasmon-pole', 'none'];

export interface SelfEnergyOptions {
  exchange: ExchangeModel;
  losses: LossModel;
}

export const DEFAULT_SELF_ENERGY: SelfEnergyOptions = { exchange: 'hedin-lundqvist', losses: 'plasmon-pole' };

/** Fermi momentum k_F = (3 pi^2 rho)^(1/3), 1/bohr, for rho in electrons/bohr^3. */
export function fermiMomentum(rho: number): number {
  return Math.cbrt(3 * Math.PI * Math.PI * Math.max(rho, 0));
}

/**
 * Dirac-Hara exchange potential (hartree) at density rho (1/bohr^3) and local momentum p (1/bohr).
 * p <= k_F gives the Fermi-level value -k_F/pi times the Hartree-Fock factor.
 */
export function diracHaraExchange(rho: number, p: number): number {
  const kf = fermiMomentum(rho);
  if (kf === 0) return 0;
  const x = p / kf;
  let factor: number;
  if (Math.abs(x - 1) < 1e-12) factor = 1;
  else if (x > 1) factor = 1 + ((1 - x * x) / (2 * x)) * Math.log1p(2 / (x - 1));
  else factor = 1 + ((1 - x * x) / (2 * x)) * Math.log((1 + x) / (1 - x));
  return -(kf / Math.PI) * factor;
}

// 24-point Gauss-Legendre nodes/weights on [-1, 1], built once (Golub-Welsch not needed: Newton on P_n).
const GAUSS_N = 24;
const GAUSS: { x: Float64Array; w: Float64Array } = (() => {
  const x = new Float64Array(GAUSS_N);
  const w = new Float64Array(GAUSS_N);
  for (let i = 0; i < GAUSS_N; i++) {
    let z = Math.cos((Math.PI * (i + 0.75)) / (GAUSS_N + 0.5));
    for (let it = 0; it < 100; it++) {
      let p0 = 1;
      let p1 = z;
      for (let l = 2; l <= GAUSS_N; l++) {
        const p2 = ((2 * l - 1) * z * p1 - (l - 1) * p0) / l;
        p0 = p1;
        p1 = p2;
      }
      const dp = (GAUSS_N * (z * p1 - p0)) / (z * z - 1);
      const dz = p1 / dp;
      z -= dz;
      if (Math.abs(dz) < 1e-15) {
        x[i] = z;
        w[i] = 2 / ((1 - z * z) * dp * dp);
        break;
      }
    }
  }
  return { x, w };
})();

/**
 * Imaginary part of the single-plasmon-pole self-energy (hartree, <= 0) for an electron of
 * momentum p (1/bohr) in an electron gas of density rho (1/bohr^3).
 */
export function plasmonPoleImaginary(rho: number, p: number): number {
  if (!(rho > 0)) return 0;
  const kf = fermiMomentum(rho);
  const excess = (p * p - kf * kf) / 2;
  const wp2 = 4 * Math.PI * rho;
  const wp = Math.sqrt(wp2);
  if (excess <= wp) return 0;
  const a = (kf * kf) / 3;
  const omega = (q: number) => Math.sqrt(wp2 + a * q * q + 0.25 * q * q * q * q);
  const g = (q: number) => p * q - 0.5 * q * q - omega(q);
  // q_b: omega(q_b) = excess (omega increasing): solve the quadratic in q^2
  const disc = a * a - 4 * 0.25 * (wp2 - excess * excess);
  const qb = Math.sqrt((-a + Math.sqrt(Math.max(disc, 0))) / 0.5);
  // g is concave; its maximum lies in (0, p); find it by golden-section, then the roots by bisection
  let lo = 0;
  let hi = 2 * p;
  for (let it = 0; it < 80; it++) {
    const m1 = lo + 0.382 * (hi - lo);
    const m2 = lo + 0.618 * (hi - lo);
    if (g(m1) < g(m2)) lo = m1;
    else hi = m2;
  }
  const qPeak = 0.5 * (lo + hi);
  if (g(qPeak) <= 0) return 0;
  const root = (x0: number, x1: number) => {
    // g(x0) and g(x1) of opposite sign
    let u = x0;
    let v = x1;
    const gu = g(u);
    for (let it = 0; it < 100; it++) {
      const m = 0.5 * (u + v);
      if (g(m) * gu > 0) u = m;
      else v = m;
    }
    return 0.5 * (u + v);
  };
  const q1 = root(1e-12, qPeak);
  const q2 = root(qPeak, 2 * p + 1);
  const upper = Math.min(q2, qb);
  if (!(upper > q1)) return 0;
  // ∫ dq / (q w_q) = ∫ d(ln q) / w_q, Gauss-Legendre in ln q
  const s0 = Math.log(q1);
  const s1 = Math.log(upper);
  const half = 0.5 * (s1 - s0);
  const mid = 0.5 * (s1 + s0);
  let sum = 0;
  for (let i = 0; i < GAUSS_N; i++) sum += GAUSS.w[i] / omega(Math.exp(mid + half * GAUSS.x[i]));
  return -(wp2 / (2 * p)) * sum * half;
}

/**
 * Core/valence self-energy of model 'valence-hedin-lundqvist' (see the header), [Re, Im] hartree:
 * Hedin-Lundqvist of the valence density rho - coreRho plus the Dirac-Hara exchange of coreRho at
 * the local momentum sqrt(k^2 + k_F(rho)^2). coreRho is clamped to [0, rho]; coreRho = 0 gives
 * exactly the Hedin-Lundqvist self-energy of rho.
 */
export function coreValenceSelfEnergy(rho: number, coreRho: number, k: number, losses: LossModel = 'plasmon-pole', out: [number, number] = [0, 0]): [number, number] {
  const core = Math.min(Math.max(coreRho, 0), Math.max(rho, 0));
  hedinLundqvistInterpolated(rho - core, 0.5 * k * k, out);
  if (losses === 'none') out[1] = 0;
  if (core > 0) {
    const kf = fermiMomentum(rho);
    out[0] += diracHaraExchange(core, Math.sqrt(k * k + kf * kf));
  }
  return out;
}

/**
 * Photoelectron self-energy [Re, Im] (hartree) at density rho (1/bohr^3) for a photoelectron whose
 * energy above the Fermi level is k^2 / 2 (k in 1/bohr; local momentum p = sqrt(k^2 + k_F^2)).
 * Re replaces the ground-state exchange-correlation potential; Im <= 0. `coreRho` (the core part
 * of rho, default 0) is used by model 'valence-hedin-lundqvist' only.
 */
export function selfEnergy(rho: number, k: number, options: SelfEnergyOptions = DEFAULT_SELF_ENERGY, out: [number, number] = [0, 0], coreRho = 0): [number, number] {
  const excess = 0.5 * k * k;
  if (options.exchange === 'valence-hedin-lundqvist') return coreValenceSelfEnergy(rho, coreRho, k, options.losses, out);
  if (options.exchange === 'hedin-lundqvist') {
    hedinLundqvistInterpolated(rho, excess, out);
    if (options.losses === 'none') out[1] = 0;
    return out;
  }
  const kf = fermiMomentum(rho);
  const re = options.exchange === 'dirac-hara' ? diracHaraExchange(rho, Math.sqrt(k * k + kf * kf)) : ldaExchangeCorrelationPotential(rho);
  let im = 0;
  if (options.losses === 'plasmon-pole') im = hedinLundqvistInterpolated(rho, excess, out)[1];
  out[0] = re;
  out[1] = im;
  return out;
}

/** A fixed density profile prepared for fast self-energies at many energies. */
export interface SelfEnergyGrid {
  density: Float64Array;
  /** Core part of the density per point (clamped to [0, density]); null = no core. */
  coreDensity: Float64Array | null;
  /** The valence density (density - core) prepared for the table; null = no core. */
  valenceGas: PreparedGas | null;
  /** k_F per point, 1/bohr. */
  fermiMomentum: Float64Array;
  /** Ground-state LDA v_xc per point, hartree. */
  lda: Float64Array;
  gas: PreparedGas;
}

/**
 * Prepare a density profile (electrons/bohr^3) for {@link selfEnergyOnGrid}, with its core part
 * (same length; for 'valence-hedin-lundqvist') when given.
 */
export function prepareSelfEnergyGrid(density: Float64Array, coreDensity?: Float64Array | null): SelfEnergyGrid {
  const n = density.length;
  const kf = new Float64Array(n);
  const lda = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    kf[i] = fermiMomentum(density[i]);
    lda[i] = ldaExchangeCorrelationPotential(density[i]);
  }
  let core: Float64Array | null = null;
  let valenceGas: PreparedGas | null = null;
  if (coreDensity) {
    if (coreDensity.length !== n) throw new InputError(`core density needs ${n} points like the density (got ${coreDensity.length})`, { key: 'coreDensity' });
    core = new Float64Array(n);
    const valence = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      core[i] = Math.min(Math.max(coreDensity[i], 0), Math.max(density[i], 0));
      valence[i] = density[i] - core[i];
    }
    valenceGas = prepareGas(valence);
  }
  return { density, coreDensity: core, valenceGas, fermiMomentum: kf, lda, gas: prepareGas(density) };
}

/**
 * {@link selfEnergy} at every point of a prepared profile for one photoelectron energy k^2 / 2
 * above the Fermi level (k in 1/bohr): writes Re and Im (hartree) into `re` and `im`.
 */
export function selfEnergyOnGrid(grid: SelfEnergyGrid, k: number, options: SelfEnergyOptions, re: Float64Array, im: Float64Array): void {
  const n = grid.density.length;
  const excess = 0.5 * k * k;
  const wantLosses = options.losses === 'plasmon-pole';
  if (options.exchange === 'valence-hedin-lundqvist') {
    hedinLundqvistOnGrid(grid.valenceGas ?? grid.gas, excess, re, im);
    if (!wantLosses) im.fill(0, 0, n);
    const core = grid.coreDensity;
    if (core) {
      for (let i = 0; i < n; i++) {
        if (core[i] > 0) {
          const kf = grid.fermiMomentum[i];
          re[i] += diracHaraExchange(core[i], Math.sqrt(k * k + kf * kf));
        }
      }
    }
    return;
  }
  if (options.exchange === 'hedin-lundqvist' || wantLosses) hedinLundqvistOnGrid(grid.gas, excess, re, im);
  if (!wantLosses) im.fill(0, 0, n);
  if (options.exchange === 'dirac-hara') {
    for (let i = 0; i < n; i++) {
      const kf = grid.fermiMomentum[i];
      re[i] = diracHaraExchange(grid.density[i], Math.sqrt(k * k + kf * kf));
    }
  } else if (options.exchange === 'ground-state-lda') {
    re.set(grid.lda.subarray(0, n));
  }
}
