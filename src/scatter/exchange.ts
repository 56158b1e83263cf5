/**
 * Energy-dependent exchange-correlation (self-energy) of the photoelectron in a local-density
 * picture: at each point the electron sees the self-energy of a homogeneous electron gas of the local
 * density rho(r), evaluated at the local momentum p(r) = sqrt(k^2 + k_F(r)^2), where k is the
 * photoelectron wave number in the interstitial and k_F = (3 pi^2 rho)^(1/3) (hartree atomic units).
 *
 * Real part, model 'dirac-hara': the Dirac-Hara exchange (Hara, J. Phys. Soc. Japan 22, 710 (1967);
 * the Hartree-Fock exchange of the electron gas at momentum p, Slater, Phys. Rev. 81, 385 (1951)):
 *   Re Sigma = -(k_F / pi) [ 1 + (1 - x^2) / (2x) ln |(1 + x) / (1 - x)| ],   x = p / k_F,
 * equal to the Kohn-Sham exchange -(3 rho / pi)^(1/3) at the Fermi level (x = 1) and falling off
 * as -2 k_F^3 / (3 pi p^2) at high energy. Model 'ground-state-lda' uses the energy-independent LDA
 * exchange-correlation potential instead (for comparison). No correlation is added to Dirac-Hara.
 *
 * Imaginary part (losses), model 'plasmon-pole': the on-shell plasmon-emission rate of the
 * single-plasmon-pole dielectric function of Lundqvist (Phys. Kondens. Materie 6, 193 (1967)) as
 * used by Hedin and Lundqvist (Solid State Physics 23, 1 (1969)), dispersion
 *   w_q^2 = w_p^2 + (v_F^2 / 3) q^2 + q^4 / 4,   w_p^2 = 4 pi rho,   v_F = k_F,
 * (the q^2 coefficient reproduces Thomas-Fermi screening in the static limit). In GW the golden-rule
 * rate with Im eps^-1(q, w) = -(pi w_p^2 / (2 w_q)) delta(w - w_q) gives, after the angular
 * integral (our derivation),
 *   Im Sigma(p) = -(w_p^2 / (2 p)) ∫ dq / (q w_q)
 * over the q where emission is kinematically allowed: w_q + q^2/2 <= p q (momentum) and
 * w_q <= (p^2 - k_F^2)/2 (the electron stays above the Fermi level). No losses below the plasmon
 * threshold; electron-hole excitations are not in the single-pole model.
 *
 * This is the "acceptable first step" of the design notes: Dirac-Hara real part plus a plasmon-pole
 * loss model. The full Hedin-Lundqvist real part can replace `dirac-hara` behind the same
 * {@link selfEnergy} signature.
 */
import { ldaExchangeCorrelationPotential } from './lda';

/** Which real part: Dirac-Hara (energy dependent) or the ground-state LDA potential. */
export type ExchangeModel = 'dirac-hara' | 'ground-state-lda';
/** Which loss model for the imaginary part. */
export type LossModel = 'plasmon-pole' | 'none';

export interface SelfEnergyOptions {
  exchange: ExchangeModel;
  losses: LossModel;
}

export const DEFAULT_SELF_ENERGY: SelfEnergyOptions = { exchange: 'dirac-hara', losses: 'plasmon-pole' };

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
 * Photoelectron self-energy [Re, Im] (hartree) at density rho (1/bohr^3) for interstitial wave
 * number k (1/bohr). Re is the exchange(-correlation) potential replacing the ground-state one.
 */
export function selfEnergy(rho: number, k: number, options: SelfEnergyOptions = DEFAULT_SELF_ENERGY): [number, number] {
  const kf = fermiMomentum(rho);
  const p = Math.sqrt(k * k + kf * kf);
  const re = options.exchange === 'dirac-hara' ? diracHaraExchange(rho, p) : ldaExchangeCorrelationPotential(rho);
  const im = options.losses === 'plasmon-pole' ? plasmonPoleImaginary(rho, p) : 0;
  return [re, im];
}
