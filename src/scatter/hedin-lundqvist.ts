/**
 * The Hedin-Lundqvist plasmon-pole self-energy of an electron in a homogeneous electron gas
 * (Hedin and Lundqvist, Solid State Physics 23, 1 (1969); J. Phys. C 4, 2064 (1971)), evaluated
 * on shell, as a function of the density rho and the electron's momentum p >= k_F. Hartree atomic
 * units throughout (bohr, hartree, electrons/bohr^3).
 *
 * Model: the GW approximation with the free-electron Green's function G0 and the screened
 * interaction W = v eps^-1 of Lundqvist's single-plasmon-pole dielectric function (Lundqvist, Phys.
 * Kondens. Materie 6, 193 (1967)),
 *   eps^-1(q, w) = 1 + w_p^2 / (w^2 - w_q^2),   w_p^2 = 4 pi rho,
 *   w_q^2 = w_p^2 + (k_F^2 / 3) q^2 + q^4 / 4
 * (the q^2 coefficient v_F^2/3 reproduces Thomas-Fermi screening in the static limit; the q^4
 * term makes the pole follow the free-particle energy at large q). Then Sigma = Sigma_x + Sigma_c:
 *
 *   Sigma_x(p) = -(2 k_F / pi) [ 1/2 + (1 - x^2)/(4x) ln |(1 + x)/(1 - x)| ],  x = p / k_F,
 * the bare (Hartree-Fock) exchange, which is the Dirac-Hara potential (./exchange), and
 *   Sigma_c(p, E) = ∫ d^3q/(2 pi)^3 (4 pi / q^2) (w_p^2 / (2 w_q))
 *                   [ theta(|p-q| - k_F) / (E - e_{p-q} - w_q + i0) + theta(k_F - |p-q|) / (E - e_{p-q} + w_q - i0) ],
 * e_k = k^2 / 2 (from the frequency integral of i G0 W by contours; our derivation, the standard
 * plasmon-pole result). Evaluated on shell in the G0 energy scale, E = p^2 / 2, so that the
 * energy above the Fermi level is (p^2 - k_F^2) / 2; the plasmon threshold of the losses then
 * lies exactly at E - E_F = w_p.
 *
 * Reduction to one dimension (our derivation): with k' = |p - q| as the angular variable,
 * d^3q = 2 pi q k' dq dk' / p, and the k' integral is elementary,
 *   ∫ k' dk' / (A - k'^2/2) = ln |(A - a^2/2) / (A - b^2/2)|   over [a, b] (principal value),
 * so
 *   Re Sigma_c = (w_p^2 / (2 pi p)) ∫_0^∞ dq / (q w_q) [ L_1(q) + L_2(q) ],
 *   L_1 = ln |(A_1 - lo_1^2/2) / (A_1 - (p+q)^2/2)|,  A_1 = E - w_q,  lo_1 = max(|p - q|, k_F),
 *   L_2 = ln |(A_2 - (p-q)^2/2) / (A_2 - k_F^2/2)|,   A_2 = E + w_q,  only where |p - q| < k_F,
 *   Im Sigma_c = -(w_p^2 / (2 p)) ∫ dq / (q w_q)  over q_1 < q < min(q_2, q_b),
 * where q_1 < q_2 are the roots of p q - q^2/2 - w_q = 0 (momentum conservation) and w_{q_b} =
 * (p^2 - k_F^2)/2 (the electron stays above the Fermi level). L_1 is log-singular at q_1, q_2 and
 * q_b; it and L_2 change form at q = p - k_F and p + k_F. The q integral is split at all these
 * points; each piece is integrated by Gauss-Legendre after the substitution q = a + (b - a)(3s^2 -
 * 2s^3), whose vanishing end derivatives tame the endpoint logarithms, and the tail q > q_max by
 * q = q_max / s.
 *
 * Table: for speed, Sigma_c / w_p is tabulated once (on first use; the table is a constant) on
 * ln r_s (r_s = (3 / (4 pi rho))^(1/3), 0.005-50 bohr, step 0.2) and v = log2(1 + t), t = (p^2 -
 * k_F^2) / (2 w_p) the energy above the Fermi level in units of w_p (0-18, step 1/8: t = 1, the
 * plasmon threshold, is a node), and interpolated bilinearly. Outside r_s the end rows are used;
 * beyond v = 18, Re Sigma_c falls as 1/t and Im Sigma_c as 1/sqrt(t) from the last column.
 */
import { gaussLegendre } from '../numeric/quadrature';
/** Fermi momentum k_F = (3 pi^2 rho)^(1/3), 1/bohr. */
function fermiMomentum(rho: number): number {
  return Math.cbrt(3 * Math.PI * Math.PI * Math.max(rho, 0));
}

/** Gauss-Legendre nodes and weights on [0, 1], from the [-1, 1] rule of src/numeric/quadrature.ts. */
function gaussLegendreUnit(n: number): { x: Float64Array; w: Float64Array } {
  const { nodes, weights } = gaussLegendre(n);
  return { x: Float64Array.from(nodes, (z) => 0.5 * (1 + z)), w: Float64Array.from(weights, (w) => 0.5 * w) };
}

const NODES = gaussLegendreUnit(16);

/** The plasmon-pole electron gas at one density: the quantities every formula needs. */
interface Gas {
  kf: number;
  wp2: number;
  wp: number;
  /** k_F^2 / 3, the q^2 coefficient of the dispersion. */
  a: number;
}

function gasOf(rho: number): Gas {
  const kf = fermiMomentum(rho);
  const wp2 = 4 * Math.PI * rho;
  return { kf, wp2, wp: Math.sqrt(wp2), a: (kf * kf) / 3 };
}

function omega(gas: Gas, q: number): number {
  const q2 = q * q;
  return Math.sqrt(gas.wp2 + gas.a * q2 + 0.25 * q2 * q2);
}

/** The q where w_q = target (w_q increases with q); 0 when target <= w_p. */
function dispersionInverse(gas: Gas, target: number): number {
  if (target <= gas.wp) return 0;
  // q^4/4 + a q^2 + w_p^2 - target^2 = 0 in q^2
  const disc = gas.a * gas.a + (target * target - gas.wp2);
  return Math.sqrt(2 * (Math.sqrt(disc) - gas.a));
}

/** Roots q_1 < q_2 of g(q) = p q - q^2/2 - w_q, or null when g < 0 everywhere. */
function emissionRoots(gas: Gas, p: number): [number, number] | null {
  // g is concave on (0, inf) (p q - q^2/2 is, and w_q is convex: a root of a sum of squares), so
  // g' = p - q - w'_q decreases: its zero (the peak of g) by bisection, then each root of g by
  // Newton steps kept inside their brackets.
  const g = (q: number) => p * q - 0.5 * q * q - omega(gas, q);
  const slope = (q: number) => p - q - (gas.a * q + 0.5 * q * q * q) / omega(gas, q);
  let lo = 0;
  let hi = p;
  for (let it = 0; it < 55; it++) {
    const m = 0.5 * (lo + hi);
    if (slope(m) > 0) lo = m;
    else hi = m;
  }
  const peak = 0.5 * (lo + hi);
  if (!(g(peak) > 0)) return null;
  const root = (a0: number, b0: number, rising: boolean) => {
    let a = a0;
    let b = b0;
    let q = rising ? a + 0.5 * (b - a) : a + 0.5 * (b - a);
    for (let it = 0; it < 100; it++) {
      const v = g(q);
      if (v === 0) return q;
      if ((v < 0) === rising) a = q;
      else b = q;
      let next = q - v / slope(q);
      if (!(next > a && next < b)) next = 0.5 * (a + b);
      if (Math.abs(next - q) <= 1e-15 * Math.max(q, 1e-300) || b - a <= 1e-15 * b) return next;
      q = next;
    }
    return q;
  };
  return [root(0, peak, true), root(peak, 2 * p + 1, false)];
}

/** L_1(q) + L_2(q) of the header at E = p^2/2. */
function logKernel(gas: Gas, p: number, q: number, w: number): number {
  const e = 0.5 * p * p;
  const a1 = e - w;
  const d = Math.abs(p - q);
  const lo1 = Math.max(d, gas.kf);
  const hi1 = p + q;
  // the logarithms are integrably singular at q_1, q_2, q_b: a node landing on one exactly is floored
  let sum = Math.log(Math.max(Math.abs((a1 - 0.5 * lo1 * lo1) / (a1 - 0.5 * hi1 * hi1)), 1e-300));
  if (d < gas.kf) {
    const a2 = e + w;
    const hi2 = Math.min(gas.kf, hi1);
    sum += Math.log(Math.max(Math.abs((a2 - 0.5 * d * d) / (a2 - 0.5 * hi2 * hi2)), 1e-300));
  }
  return sum;
}

/** ∫_a^b dq L(q) / (q w_q) by Gauss-Legendre in s, q = a + (b - a)(3 s^2 - 2 s^3). */
function smoothedPiece(gas: Gas, p: number, a: number, b: number): number {
  if (!(b > a * (1 + 1e-14))) return 0;
  const len = b - a;
  let part = 0;
  for (let i = 0; i < NODES.x.length; i++) {
    const t = NODES.x[i];
    const q = a + len * t * t * (3 - 2 * t);
    const w = omega(gas, q);
    part += (NODES.w[i] * 6 * t * (1 - t) * logKernel(gas, p, q, w)) / (q * w);
  }
  return part * len;
}

/**
 * Plasmon-pole correlation part Sigma_c(p, p^2/2) = [Re, Im] (hartree) for an electron of
 * momentum p >= k_F (1/bohr) in an electron gas of density rho (electrons/bohr^3), by quadrature
 * (see the header). p below k_F is taken as k_F. rho <= 0 gives [0, 0].
 */
export function plasmonPoleCorrelation(rho: number, p: number): [number, number] {
  if (!(rho > 0)) return [0, 0];
  const gas = gasOf(rho);
  const pp = Math.max(p, gas.kf);
  const excess = 0.5 * (pp * pp - gas.kf * gas.kf);
  const roots = excess > gas.wp ? emissionRoots(gas, pp) : null;
  const qb = dispersionInverse(gas, excess);
  // break points of the q integral, sorted (at most five besides 0)
  const points = new Float64Array(7);
  let count = 1;
  const add = (b: number) => {
    if (!(b > 0) || !Number.isFinite(b)) return;
    let i = count++;
    while (i > 0 && points[i - 1] > b) {
      points[i] = points[i - 1];
      i--;
    }
    points[i] = b;
  };
  add(pp + gas.kf);
  add(pp - gas.kf);
  if (roots) {
    add(roots[0]);
    add(roots[1]);
  }
  add(qb);
  let re = 0;
  const nodes = NODES.x.length;
  for (let s = 0; s + 1 < count; s++) re += smoothedPiece(gas, pp, points[s], points[s + 1]);
  // tail: [last, 2 last] as a piece, then q > 2 last by q = qMax / s
  const last = points[count - 1];
  const qMax = 2 * last;
  re += smoothedPiece(gas, pp, last, qMax);
  for (let i = 0; i < nodes; i++) {
    const t = NODES.x[i];
    const q = qMax / t;
    const w = omega(gas, q);
    re += ((NODES.w[i] * logKernel(gas, pp, q, w)) / (q * w)) * (qMax / (t * t));
  }
  re *= gas.wp2 / (2 * Math.PI * pp);
  let im = 0;
  if (roots) {
    const upper = Math.min(roots[1], qb);
    if (upper > roots[0]) {
      // ∫ dq / (q w_q) = ∫ d(ln q) / w_q
      const s0 = Math.log(roots[0]);
      const len = Math.log(upper) - s0;
      let sum = 0;
      for (let i = 0; i < NODES.x.length; i++) sum += NODES.w[i] / omega(gas, Math.exp(s0 + len * NODES.x[i]));
      im = -(gas.wp2 / (2 * pp)) * sum * len;
    }
  }
  return [re, im];
}

// ---- table ----------------------------------------------------------------------------------

const RS_FACTOR = Math.cbrt(3 / (4 * Math.PI));
const LN_RS_MIN = Math.log(0.005);
const LN_RS_STEP = 0.2;
const N_RS = Math.ceil((Math.log(20) - LN_RS_MIN) / LN_RS_STEP) + 1;
const V_STEP = 0.125;
const N_V = Math.round(15 / V_STEP) + 1;
const U_END = Math.pow(2, (N_V - 1) * V_STEP) - 1;

/** Dirac-Hara (Hartree-Fock) exchange, hartree; the same formula as ./exchange diracHaraExchange. */
function bareExchange(kf: number, p: number): number {
  const x = p / kf;
  if (Math.abs(x - 1) < 1e-12) return -kf / Math.PI;
  const log = x > 1 ? Math.log1p(2 / (x - 1)) : Math.log((1 + x) / (1 - x));
  return -(kf / Math.PI) * (1 + ((1 - x * x) / (2 * x)) * log);
}

/** True when plasmon emission is allowed at energy t w_p above the Fermi level. */
function emits(gas: Gas, t: number): boolean {
  const p = Math.sqrt(gas.kf * gas.kf + 2 * t * gas.wp);
  const roots = emissionRoots(gas, p);
  if (!roots) return false;
  return Math.min(roots[1], dispersionInverse(gas, t * gas.wp)) > roots[0];
}

/** Onset of plasmon emission, (E - E_F) / w_p (>= 1), by bisection. */
function emissionOnset(gas: Gas): number {
  let lo = 1;
  let hi = 2;
  while (!emits(gas, hi)) {
    lo = hi;
    hi *= 2;
  }
  for (let it = 0; it < 60; it++) {
    const m = 0.5 * (lo + hi);
    if (emits(gas, m)) hi = m;
    else lo = m;
  }
  return hi;
}

/**
 * Sigma_HL / w_p = (Sigma_x + Sigma_c) / w_p tabulated on (ln r_s, v), row-major [i_rs * N_V + i_v],
 * v = log2(1 + t / t_on(r_s)) with t = (E - E_F) / w_p and t_on the exact onset of plasmon emission
 * (slightly above 1), so that the onset is the node v = 1 and Im = 0 on every node below it.
 */
export interface PlasmonPoleTable {
  /** ln t_on per r_s row. */
  lnOnset: Float64Array;
  re: Float64Array;
  im: Float64Array;
}

let table: PlasmonPoleTable | null = null;

/**
 * The tabulated self-energy (built on first use, about 7000 quadratures; afterwards a constant:
 * a memoised pure function of nothing).
 */
export function plasmonPoleTable(): PlasmonPoleTable {
  if (table) return table;
  const re = new Float64Array(N_RS * N_V);
  const im = new Float64Array(N_RS * N_V);
  const lnOnset = new Float64Array(N_RS);
  for (let i = 0; i < N_RS; i++) {
    const rs = Math.exp(LN_RS_MIN + i * LN_RS_STEP);
    const rho = 3 / (4 * Math.PI * rs * rs * rs);
    const gas = gasOf(rho);
    const onset = emissionOnset(gas);
    lnOnset[i] = Math.log(onset);
    for (let j = 0; j < N_V; j++) {
      const t = onset * (Math.pow(2, j * V_STEP) - 1);
      const p = Math.sqrt(gas.kf * gas.kf + 2 * t * gas.wp);
      const [r, m] = plasmonPoleCorrelation(rho, p);
      re[i * N_V + j] = (r + bareExchange(gas.kf, p)) / gas.wp;
      im[i * N_V + j] = j * V_STEP <= 1 ? 0 : m / gas.wp;
    }
  }
  table = { lnOnset, re, im };
  return table;
}

/**
 * Interpolated Hedin-Lundqvist self-energy Sigma_x + Sigma_c = [Re, Im] (hartree) at density rho
 * (electrons/bohr^3) for an electron whose energy above the Fermi level is `excess` =
 * (p^2 - k_F^2)/2 >= 0 (hartree). Writes into `out` when given. rho <= 0 gives [0, 0].
 */
export function hedinLundqvistInterpolated(rho: number, excess: number, out: [number, number] = [0, 0]): [number, number] {
  if (!(rho > 0)) {
    out[0] = 0;
    out[1] = 0;
    return out;
  }
  const tab = table ?? plasmonPoleTable();
  const wp = Math.sqrt(4 * Math.PI * rho);
  const lnRs = Math.log(RS_FACTOR / Math.cbrt(rho));
  let x = (lnRs - LN_RS_MIN) / LN_RS_STEP;
  if (x < 0) x = 0;
  if (x > N_RS - 1) x = N_RS - 1;
  let i = Math.floor(x);
  if (i > N_RS - 2) i = N_RS - 2;
  const fx = x - i;
  const onset = Math.exp((1 - fx) * tab.lnOnset[i] + fx * tab.lnOnset[i + 1]);
  const u = Math.max(excess, 0) / (wp * onset);
  let scale = 1;
  let y: number;
  if (u > U_END) {
    // beyond the table both parts fall off as 1/sqrt(E - E_F) (seen in the quadrature at large t)
    y = N_V - 1;
    scale = Math.sqrt(U_END / u);
  } else {
    y = Math.log2(1 + u) / V_STEP;
  }
  let j = Math.floor(y);
  if (j > N_V - 2) j = N_V - 2;
  const fy = y - j;
  const k00 = i * N_V + j;
  const k10 = k00 + N_V;
  const w00 = (1 - fx) * (1 - fy);
  const w01 = (1 - fx) * fy;
  const w10 = fx * (1 - fy);
  const w11 = fx * fy;
  out[0] = wp * scale * (w00 * tab.re[k00] + w01 * tab.re[k00 + 1] + w10 * tab.re[k10] + w11 * tab.re[k10 + 1]);
  out[1] = wp * scale * (w00 * tab.im[k00] + w01 * tab.im[k00 + 1] + w10 * tab.im[k10] + w11 * tab.im[k10 + 1]);
  return out;
}

/**
 * Per-point quantities of a fixed density profile that the table lookup needs, computed once so
 * that evaluating the self-energy at a new energy costs one logarithm per point.
 */
export interface PreparedGas {
  /** Plasmon frequency w_p per point, hartree (0 where rho <= 0). */
  wp: Float64Array;
  /** 1 / (w_p t_on) per point (0 where rho <= 0). */
  inverseOnsetEnergy: Float64Array;
  /** Table row (ln r_s cell) per point. */
  row: Int32Array;
  /** Fraction within the row cell. */
  rowFraction: Float64Array;
}

/** Prepare a density profile (electrons/bohr^3, any length) for {@link hedinLundqvistOnGrid}. */
export function prepareGas(density: Float64Array): PreparedGas {
  const tab = table ?? plasmonPoleTable();
  const n = density.length;
  const wp = new Float64Array(n);
  const inverseOnsetEnergy = new Float64Array(n);
  const row = new Int32Array(n);
  const rowFraction = new Float64Array(n);
  for (let m = 0; m < n; m++) {
    const rho = density[m];
    if (!(rho > 0)) continue;
    const w = Math.sqrt(4 * Math.PI * rho);
    let x = (Math.log(RS_FACTOR / Math.cbrt(rho)) - LN_RS_MIN) / LN_RS_STEP;
    if (x < 0) x = 0;
    if (x > N_RS - 1) x = N_RS - 1;
    let i = Math.floor(x);
    if (i > N_RS - 2) i = N_RS - 2;
    const fx = x - i;
    wp[m] = w;
    row[m] = i;
    rowFraction[m] = fx;
    inverseOnsetEnergy[m] = 1 / (w * Math.exp((1 - fx) * tab.lnOnset[i] + fx * tab.lnOnset[i + 1]));
  }
  return { wp, inverseOnsetEnergy, row, rowFraction };
}

/**
 * {@link hedinLundqvistInterpolated} at every point of a prepared profile for one energy `excess`
 * above the Fermi level (hartree): writes Re and Im (hartree) into `re` and `im`.
 */
export function hedinLundqvistOnGrid(gas: PreparedGas, excess: number, re: Float64Array, im: Float64Array): void {
  const tab = table ?? plasmonPoleTable();
  const e = Math.max(excess, 0);
  for (let m = 0; m < gas.wp.length; m++) {
    const wp = gas.wp[m];
    if (wp === 0) {
      re[m] = 0;
      im[m] = 0;
      continue;
    }
    const u = e * gas.inverseOnsetEnergy[m];
    let scale = 1;
    let y: number;
    if (u > U_END) {
      y = N_V - 1;
      scale = Math.sqrt(U_END / u);
    } else {
      y = Math.log2(1 + u) / V_STEP;
    }
    let j = Math.floor(y);
    if (j > N_V - 2) j = N_V - 2;
    const fy = y - j;
    const fx = gas.rowFraction[m];
    const k00 = gas.row[m] * N_V + j;
    const k10 = k00 + N_V;
    const w00 = (1 - fx) * (1 - fy);
    const w01 = (1 - fx) * fy;
    const w10 = fx * (1 - fy);
    const w11 = fx * fy;
    const s = wp * scale;
    re[m] = s * (w00 * tab.re[k00] + w01 * tab.re[k00 + 1] + w10 * tab.re[k10] + w11 * tab.re[k10 + 1]);
    im[m] = s * (w00 * tab.im[k00] + w01 * tab.im[k00 + 1] + w10 * tab.im[k10] + w11 * tab.im[k10 + 1]);
  }
}
