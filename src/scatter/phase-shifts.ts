/**
 * Complex partial-wave phase shifts delta_l(k) of one muffin-tin sphere.
 *
 * Inside the sphere (radius R) the radial Schrödinger equation in hartree atomic units,
 *   u'' = [ l(l+1)/r^2 + 2 U(r) - k^2 ] u,      E = k^2 / 2,
 * with a complex potential U (relative to the interstitial level, so U = 0 outside), is integrated
 * outward from near the origin on a logarithmic grid x = ln r. With u = r^(1/2) phi the first
 * derivative disappears, phi'' = [ (l + 1/2)^2 + 2 r^2 (U - E) ] phi, and Numerov's method applies
 * (Numerov, Astron. Nachr. 230, 359 (1927); the log-grid form as in Koonin, Computational Physics
 * (1986), ch. 3). Start: u ~ r^(l+1) (1 + c r / (l+1)) with c = lim r U(r) (the Coulomb cusp).
 * Each l starts at r where (r/R)^(2l+1) < 1e-14, so that the admixture of the irregular solution
 * that the start introduces has died away by r = R.
 *
 * Matching: the logarithmic derivative gamma = w'/w of w = u/r at r = R (fifth-order one-sided
 * difference on the grid) is matched to the free solution w = A [ j_l(kr) - tan(delta_l) y_l(kr) ],
 *   tan delta_l = ( k j_l'(kR) - gamma j_l(kR) ) / ( k y_l'(kR) - gamma y_l(kR) ),
 * and delta_l = atan(tan delta_l) (complex when U is). Conventions: outgoing waves e^{ikr},
 * S_l = e^{2 i delta_l}, t_l = e^{i delta_l} sin delta_l, so that an incoming regular wave j_l
 * leaves as j_l + i t_l h_l with h_l = j_l + i y_l; an attractive potential gives delta_l > 0.
 * Re(delta_l) is returned in (-pi/2, pi/2]; continuity in k is the caller's business.
 *
 * Scalar-relativistic option (`relativistic: true`): the Koelling-Harmon equation (Koelling and
 * Harmon, J. Phys. C 10, 3107 (1977); mass-velocity and Darwin terms, spin-orbit dropped by
 * averaging over j = l +- 1/2, the same equation as the scalar-relativistic atoms of ./atom). With
 * E = k^2/2 the kinetic energy in the interstitial, M(r) = 1 + (E - U(r)) / (2 c^2) (complex with
 * U), P = u and Q = (P' - P/r) / (2M):
 *   dP/dx = P + 2 M r Q,   dQ/dx = [r (U - E) + l(l+1) / (2 M r)] P - Q     (x = ln r),
 * integrated by the implicit fifth-order Adams-Moulton formula (an exact complex 2x2 solve per
 * step, as in ./atom/radial). P and Q are continuous at the radius (the equation is first order),
 * and outside (U = 0, M = M_0 = 1 + E/(2c^2)) the solutions are j_l, y_l of the relativistic wave
 * number K, K^2 = 2 M_0 E = k^2 (1 + k^2 / (4 c^2)); so gamma = w'/w = 2 M_0 Q / P is matched as
 * above with K in place of k. Start: P ~ r^g, with g = sqrt(l(l+1) + 1 - (Z/c)^2) where the start
 * lies inside the nuclear region r < Z/(2c^2) (the point-nucleus limit of the equation, as in
 * ./atom/radial), else g = l + 1 with the Coulomb cusp factor; the admixture of the irregular
 * solution dies away as for the non-relativistic start. For c -> infinity it is the
 * non-relativistic equation (checked in the tests).
 */
import { SPEED_OF_LIGHT_AU } from '../core/constants';
import { ComputationError } from '../core/errors';
import { legendre } from './angular';
import { besselDerivatives, sphericalBesselJ, sphericalBesselY } from './spherical-bessel';

/**
 * A complex potential inside one sphere on a logarithmic grid that ends exactly at the sphere
 * radius: r_i = radius exp((i - (n - 1)) h), i = 0..n-1. Units: bohr, hartree.
 */
export interface SpherePotential {
  /** Sphere (muffin-tin) radius, bohr. */
  radius: number;
  /** Log step. */
  h: number;
  /** Radii, bohr, increasing; last = radius. */
  r: Float64Array;
  /** Re U(r), hartree, relative to the interstitial level. */
  re: Float64Array;
  /** Im U(r), hartree (negative for absorption). */
  im: Float64Array;
}

/** A log grid r_i = radius exp((i - (n-1)) h) from about rMin up to exactly `radius`. */
export function sphereGrid(radius: number, h = 0.01, rMin = 1e-5): Float64Array {
  if (!(radius > rMin)) throw new RangeError(`sphere radius ${radius} must exceed rMin ${rMin}`);
  const n = Math.ceil(Math.log(radius / rMin) / h) + 1;
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) r[i] = radius * Math.exp((i - (n - 1)) * h);
  return r;
}

/** A SpherePotential from a function U(r) returning [re, im] (hartree). */
export function spherePotentialFrom(radius: number, potential: (r: number) => [number, number], h = 0.01, rMin = 1e-5): SpherePotential {
  const r = sphereGrid(radius, h, rMin);
  const re = new Float64Array(r.length);
  const im = new Float64Array(r.length);
  for (let i = 0; i < r.length; i++) {
    const [a, b] = potential(r[i]);
    re[i] = a;
    im[i] = b;
  }
  return { radius, h, r, re, im };
}

/** Complex phase shifts for l = 0..lmax: delta_l = re[l] + i im[l]. */
export interface PhaseShifts {
  /** Wave number given (defines the interstitial kinetic energy k^2/2), 1/bohr. */
  k: number;
  /** Free wave number outside the sphere: k, or the relativistic K = k sqrt(1 + k^2/(4c^2)). */
  waveNumber: number;
  lmax: number;
  re: Float64Array;
  im: Float64Array;
}

/** Working arrays reused across energies (allocation-free inner loops). */
export interface PhaseShiftWorkspace {
  wRe: Float64Array;
  wIm: Float64Array;
  tail: Float64Array;
  /** Scalar-relativistic work arrays (coefficients and solution, complex), made on first use. */
  relativistic?: RelativisticWorkspace;
}

interface RelativisticWorkspace {
  a12r: Float64Array;
  a12i: Float64Array;
  a21r: Float64Array;
  a21i: Float64Array;
  pr: Float64Array;
  pi: Float64Array;
  qr: Float64Array;
  qi: Float64Array;
}

export function phaseShiftWorkspace(n: number): PhaseShiftWorkspace {
  return { wRe: new Float64Array(n), wIm: new Float64Array(n), tail: new Float64Array(10) };
}

function relativisticWorkspace(work: PhaseShiftWorkspace, n: number): RelativisticWorkspace {
  if (!work.relativistic || work.relativistic.pr.length < n) {
    const f = () => new Float64Array(n);
    work.relativistic = { a12r: f(), a12i: f(), a21r: f(), a21i: f(), pr: f(), pi: f(), qr: f(), qi: f() };
  }
  return work.relativistic;
}

/** Which radial equation: non-relativistic (default) or scalar-relativistic (Koelling-Harmon). */
export interface RadialEquationOptions {
  relativistic?: boolean;
  /** Speed of light in hartree atomic units (default CODATA 2018, 137.036); for tests. */
  speedOfLight?: number;
}

/**
 * Free wave number outside a sphere for interstitial kinetic energy k^2/2 (hartree): k, or with
 * relativistic kinematics K = sqrt(2 M_0 E) = k sqrt(1 + k^2 / (4 c^2)).
 */
export function freeWaveNumber(k: number, options: RadialEquationOptions = {}): number {
  if (!options.relativistic) return k;
  const c = options.speedOfLight ?? SPEED_OF_LIGHT_AU;
  return k * Math.sqrt(1 + (k * k) / (4 * c * c));
}

/** Adams-Moulton (fifth order) weights: y+ = y + h (251 F+ + 646 F - 264 F- + 106 F-- - 19 F---) / 720. */
const AM0 = 251 / 720;
const AM1 = 646 / 720;
const AM2 = -264 / 720;
const AM3 = 106 / 720;
const AM4 = -19 / 720;

/**
 * Integrate one partial wave of the scalar-relativistic equation (module header) at interstitial
 * kinetic energy `energy` (hartree); returns gamma = w'/w just outside the radius (w = P/r) as
 * [re, im]. Optionally stores P on the grid (unnormalised, zero below the start).
 */
function relativisticLogDerivative(pot: SpherePotential, l: number, energy: number, c: number, ws: RelativisticWorkspace, store?: { re: Float64Array; im: Float64Array }): [number, number] {
  const { r, h } = pot;
  const n = r.length;
  const R = pot.radius;
  const inv2c2 = 1 / (2 * c * c);
  const ll1 = l * (l + 1);
  let start = 0;
  if (l > 0) {
    const rStart = R * Math.pow(10, -14 / (2 * l + 1));
    start = Math.max(0, Math.min(n - 8, Math.floor(Math.log(rStart / R) / h) + (n - 1)));
  }
  const { a12r, a12i, a21r, a21i, pr, pi, qr, qi } = ws;
  for (let i = start; i < n; i++) {
    // M = 1 + (E - U) / (2c^2); a12 = 2 M r; a21 = r (U - E) + l(l+1) conj(M) / (2 r |M|^2)
    const mr = 1 + (energy - pot.re[i]) * inv2c2;
    const mi = -pot.im[i] * inv2c2;
    const m2 = mr * mr + mi * mi;
    a12r[i] = 2 * mr * r[i];
    a12i[i] = 2 * mi * r[i];
    a21r[i] = r[i] * (pot.re[i] - energy) + (ll1 * mr) / (2 * r[i] * m2);
    a21i[i] = r[i] * pot.im[i] - (ll1 * mi) / (2 * r[i] * m2);
  }
  // starting values at start .. start + 3
  const z = Math.max(-r[start] * pot.re[start], 0);
  const nuclear = z > 0 && 2 * c * c * r[start] < z;
  const g = nuclear ? Math.sqrt(ll1 + 1 - (z / c) * (z / c)) : l + 1;
  for (let j = 0; j < 4; j++) {
    const i = start + j;
    const power = Math.exp(g * j * h);
    const cusp = nuclear ? 1 : 1 - (z * r[i]) / (l + 1);
    const p = power * cusp;
    // dP/dx = g P in the nuclear region; else P = (r/r_start)^(l+1) (1 - z r/(l+1)) and
    // dP/dx = (r/r_start)^(l+1) [(l+1) (1 - z r/(l+1)) - z r/(l+1)]
    const dpdx = nuclear ? g * p : power * ((l + 1) * cusp - (z * r[i]) / (l + 1));
    // Q = (dP/dx - P) / (2 M r)
    const b2 = a12r[i] * a12r[i] + a12i[i] * a12i[i];
    pr[i] = p;
    pi[i] = 0;
    qr[i] = ((dpdx - p) * a12r[i]) / b2;
    qi[i] = (-(dpdx - p) * a12i[i]) / b2;
  }
  // derivative history F = A y for the last four points: dP = P + a12 Q, dQ = a21 P - Q
  const fpr = new Float64Array(4);
  const fpi = new Float64Array(4);
  const fqr = new Float64Array(4);
  const fqi = new Float64Array(4);
  const derivative = (i: number, slot: number) => {
    fpr[slot] = pr[i] + a12r[i] * qr[i] - a12i[i] * qi[i];
    fpi[slot] = pi[i] + a12r[i] * qi[i] + a12i[i] * qr[i];
    fqr[slot] = a21r[i] * pr[i] - a21i[i] * pi[i] - qr[i];
    fqi[slot] = a21r[i] * pi[i] + a21i[i] * pr[i] - qi[i];
  };
  // slot (i - start) % 4 holds point i
  for (let j = 0; j < 4; j++) derivative(start + j, j);
  const c0 = h * AM0;
  const m11 = 1 - c0;
  const m22 = 1 + c0;
  for (let i = start + 3; i < n - 1; i++) {
    const s0 = (i - start) % 4;
    const s1 = (i - start + 3) % 4;
    const s2 = (i - start + 2) % 4;
    const s3 = (i - start + 1) % 4;
    const rpr = pr[i] + h * (AM1 * fpr[s0] + AM2 * fpr[s1] + AM3 * fpr[s2] + AM4 * fpr[s3]);
    const rpi = pi[i] + h * (AM1 * fpi[s0] + AM2 * fpi[s1] + AM3 * fpi[s2] + AM4 * fpi[s3]);
    const rqr = qr[i] + h * (AM1 * fqr[s0] + AM2 * fqr[s1] + AM3 * fqr[s2] + AM4 * fqr[s3]);
    const rqi = qi[i] + h * (AM1 * fqi[s0] + AM2 * fqi[s1] + AM3 * fqi[s2] + AM4 * fqi[s3]);
    const j = i + 1;
    // [1 - c0, -c0 a12; -c0 a21, 1 + c0] [P; Q] = [rp; rq]
    const m12r = -c0 * a12r[j];
    const m12i = -c0 * a12i[j];
    const m21r = -c0 * a21r[j];
    const m21i = -c0 * a21i[j];
    const detr = m11 * m22 - (m12r * m21r - m12i * m21i);
    const deti = -(m12r * m21i + m12i * m21r);
    const dd = detr * detr + deti * deti;
    const nPr = rpr * m22 - (m12r * rqr - m12i * rqi);
    const nPi = rpi * m22 - (m12r * rqi + m12i * rqr);
    const nQr = m11 * rqr - (m21r * rpr - m21i * rpi);
    const nQi = m11 * rqi - (m21r * rpi + m21i * rpr);
    pr[j] = (nPr * detr + nPi * deti) / dd;
    pi[j] = (nPi * detr - nPr * deti) / dd;
    qr[j] = (nQr * detr + nQi * deti) / dd;
    qi[j] = (nQi * detr - nQr * deti) / dd;
    if (Math.abs(pr[j]) + Math.abs(pi[j]) > 1e200) {
      for (let m = start; m <= j; m++) {
        pr[m] *= 1e-200;
        pi[m] *= 1e-200;
        qr[m] *= 1e-200;
        qi[m] *= 1e-200;
      }
      for (let m = 0; m < 4; m++) {
        fpr[m] *= 1e-200;
        fpi[m] *= 1e-200;
        fqr[m] *= 1e-200;
        fqi[m] *= 1e-200;
      }
    }
    derivative(j, (j - start) % 4);
  }
  const e = n - 1;
  if (!Number.isFinite(pr[e]) || !Number.isFinite(pi[e]) || !Number.isFinite(qr[e]) || !Number.isFinite(qi[e])) {
    throw new ComputationError(`scalar-relativistic radial integration overflowed (l = ${l})`);
  }
  if (store) {
    store.re.fill(0);
    store.im.fill(0);
    for (let i = start; i < n; i++) {
      store.re[i] = pr[i];
      store.im[i] = pi[i];
    }
  }
  // w = P / r, w'/w = P'/P - 1/r = 2 M_0 Q / P with M_0 = 1 + E/(2c^2) just outside (U = 0)
  const mOut = 1 + energy * inv2c2;
  const d2 = pr[e] * pr[e] + pi[e] * pi[e];
  void R;
  return [(2 * mOut * (qr[e] * pr[e] + qi[e] * pi[e])) / d2, (2 * mOut * (qi[e] * pr[e] - qr[e] * pi[e])) / d2];
}

/**
 * Integrate one partial wave; returns gamma = w'/w at the radius as [re, im], where w = u/r.
 * `wRe`/`wIm` hold 2 r^2 (U - E) on the grid. Optionally stores phi on the grid (for the regular
 * solution), unnormalised.
 */
function logDerivativeAtRadius(pot: SpherePotential, l: number, wRe: Float64Array, wIm: Float64Array, tail: Float64Array, store?: { re: Float64Array; im: Float64Array }): [number, number] {
  const { r, h } = pot;
  const n = r.length;
  const R = pot.radius;
  const lh = l + 0.5;
  const l2 = lh * lh;
  const h12 = (h * h) / 12;
  let start = 0;
  if (l > 0) {
    const rStart = R * Math.pow(10, -14 / (2 * l + 1));
    start = Math.max(0, Math.min(n - 8, Math.floor(Math.log(rStart / R) / h) + (n - 1)));
  }
  const c = r[start] * pot.re[start];
  // phi = r^(l+1/2) (1 + c r/(l+1)), normalised so that phi(start) is about 1
  let p0r = 1 + (c * r[start]) / (l + 1);
  let p0i = 0;
  let p1r = Math.exp(h * lh) * (1 + (c * r[start + 1]) / (l + 1));
  let p1i = 0;
  // g = 1 - h^2 F / 12, F = l2 + w
  let g0r = 1 - h12 * (l2 + wRe[start]);
  let g0i = -h12 * wIm[start];
  let g1r = 1 - h12 * (l2 + wRe[start + 1]);
  let g1i = -h12 * wIm[start + 1];
  if (store) {
    store.re.fill(0);
    store.im.fill(0);
    store.re[start] = p0r;
    store.re[start + 1] = p1r;
  }
  // keep the last five phi values for the end derivative
  const t = tail; // t[0..4] re, t[5..9] im, ring by index
  const keep = (i: number, pr: number, pi: number) => {
    const slot = i % 5;
    t[slot] = pr;
    t[5 + slot] = pi;
  };
  keep(start, p0r, p0i);
  keep(start + 1, p1r, p1i);
  for (let i = start + 1; i < n - 1; i++) {
    const g2r = 1 - h12 * (l2 + wRe[i + 1]);
    const g2i = -h12 * wIm[i + 1];
    // numerator = (12 - 10 g1) p1 - g0 p0
    const ar = 12 - 10 * g1r;
    const ai = -10 * g1i;
    const nr = ar * p1r - ai * p1i - (g0r * p0r - g0i * p0i);
    const ni = ar * p1i + ai * p1r - (g0r * p0i + g0i * p0r);
    const den = g2r * g2r + g2i * g2i;
    let p2r = (nr * g2r + ni * g2i) / den;
    let p2i = (ni * g2r - nr * g2i) / den;
    p0r = p1r;
    p0i = p1i;
    p1r = p2r;
    p1i = p2i;
    g0r = g1r;
    g0i = g1i;
    g1r = g2r;
    g1i = g2i;
    const size = Math.abs(p1r) + Math.abs(p1i);
    if (size > 1e200) {
      const s = 1e-200;
      p0r *= s; p0i *= s; p1r *= s; p1i *= s; p2r *= s; p2i *= s;
      for (let m = 0; m < 10; m++) t[m] *= s;
      if (store) for (let m = 0; m <= i; m++) { store.re[m] *= s; store.im[m] *= s; }
    }
    keep(i + 1, p1r, p1i);
    if (store) {
      store.re[i + 1] = p1r;
      store.im[i + 1] = p1i;
    }
  }
  if (!Number.isFinite(p1r) || !Number.isFinite(p1i)) throw new ComputationError(`radial integration overflowed (l = ${l})`);
  // fifth-order backward difference d phi / dx at the last point
  const e = n - 1;
  const v = (i: number, im: boolean) => t[(im ? 5 : 0) + (i % 5)];
  const dr = (25 * v(e, false) - 48 * v(e - 1, false) + 36 * v(e - 2, false) - 16 * v(e - 3, false) + 3 * v(e - 4, false)) / (12 * h);
  const di = (25 * v(e, true) - 48 * v(e - 1, true) + 36 * v(e - 2, true) - 16 * v(e - 3, true) + 3 * v(e - 4, true)) / (12 * h);
  const pr = v(e, false);
  const pi = v(e, true);
  const d2 = pr * pr + pi * pi;
  // phi'/phi
  const qr = (dr * pr + di * pi) / d2;
  const qi = (di * pr - dr * pi) / d2;
  // u'/u = (phi'/phi + 1/2) / r ; w'/w = u'/u - 1/r
  return [(qr + 0.5) / R - 1 / R, qi / R];
}

function fillW(pot: SpherePotential, k: number, wRe: Float64Array, wIm: Float64Array): void {
  const e = 0.5 * k * k;
  for (let i = 0; i < pot.r.length; i++) {
    const r2 = 2 * pot.r[i] * pot.r[i];
    wRe[i] = r2 * (pot.re[i] - e);
    wIm[i] = r2 * pot.im[i];
  }
}

/** Complex arctangent, delta = atan(t) with t = a + ib, Re delta in (-pi/2, pi/2]. */
export function complexAtan(a: number, b: number): [number, number] {
  if (Math.hypot(a, b) < 1e-5) {
    // t - t^3/3
    const t2r = a * a - b * b;
    const t2i = 2 * a * b;
    const t3r = t2r * a - t2i * b;
    const t3i = t2r * b + t2i * a;
    return [a - t3r / 3, b - t3i / 3];
  }
  // S = (1 + i t) / (1 - i t), delta = arg(S)/2 - i ln|S|/2
  const nr = 1 - b;
  const ni = a;
  const dr = 1 + b;
  const di = -a;
  const den = dr * dr + di * di;
  const sr = (nr * dr + ni * di) / den;
  const si = (ni * dr - nr * di) / den;
  let re = 0.5 * Math.atan2(si, sr);
  if (re <= -Math.PI / 2) re += Math.PI;
  return [re, -0.25 * Math.log(sr * sr + si * si)];
}

/**
 * Phase shifts delta_l(k), l = 0..lmax, of the sphere potential at interstitial wave number k
 * (1/bohr, > 0; the kinetic energy in the interstitial is k^2/2 hartree). With
 * `options.relativistic` the scalar-relativistic equation is solved and matched to free waves of
 * the relativistic wave number `waveNumber` (module header).
 */
export function phaseShifts(pot: SpherePotential, k: number, lmax: number, work: PhaseShiftWorkspace = phaseShiftWorkspace(pot.r.length), options: RadialEquationOptions = {}): PhaseShifts {
  if (!(k > 0)) throw new RangeError(`phase shifts need k > 0, got ${k}`);
  const relativistic = options.relativistic === true;
  const c = options.speedOfLight ?? SPEED_OF_LIGHT_AU;
  const energy = 0.5 * k * k;
  const wave = freeWaveNumber(k, options);
  if (relativistic) relativisticWorkspace(work, pot.r.length);
  else fillW(pot, k, work.wRe, work.wIm);
  const x = wave * pot.radius;
  const j = sphericalBesselJ(lmax + 1, x);
  const y = sphericalBesselY(lmax + 1, x);
  const jd = besselDerivatives(j, lmax, x);
  const yd = besselDerivatives(y, lmax, x);
  const re = new Float64Array(lmax + 1);
  const im = new Float64Array(lmax + 1);
  for (let l = 0; l <= lmax; l++) {
    const [gr, gi] = relativistic
      ? relativisticLogDerivative(pot, l, energy, c, work.relativistic!)
      : logDerivativeAtRadius(pot, l, work.wRe, work.wIm, work.tail);
    // tan delta = (K j' - gamma j) / (K y' - gamma y), K the free wave number
    const nr = wave * jd[l] - gr * j[l];
    const ni = -gi * j[l];
    const dr = wave * yd[l] - gr * y[l];
    const di = -gi * y[l];
    const den = dr * dr + di * di;
    const [a, b] = complexAtan((nr * dr + ni * di) / den, (ni * dr - nr * di) / den);
    re[l] = a;
    im[l] = b;
  }
  return { k, waveNumber: wave, lmax, re, im };
}

/**
 * The regular radial solution R_l(r) on the sphere grid (complex), normalised so that at the sphere
 * radius it equals the free solution e^{i delta} (cos delta j_l(Kr) - sin delta y_l(Kr)) =
 * j_l(Kr) + i t_l h_l(Kr) (K = k, or the relativistic wave number with `options.relativistic`,
 * when R_l is the large component P/r). Used for dipole matrix elements with core orbitals.
 */
export function regularSolution(pot: SpherePotential, k: number, l: number, delta: { re: number; im: number }, options: RadialEquationOptions = {}): { re: Float64Array; im: Float64Array } {
  const n = pot.r.length;
  const work = phaseShiftWorkspace(n);
  // phi (non-relativistic, u = r^(1/2) phi) or P = u (scalar-relativistic) on the grid
  const store = { re: new Float64Array(n), im: new Float64Array(n) };
  if (options.relativistic) {
    relativisticLogDerivative(pot, l, 0.5 * k * k, options.speedOfLight ?? SPEED_OF_LIGHT_AU, relativisticWorkspace(work, n), store);
    // P = r^(1/2) phi with phi = P / sqrt(r), so the normalisation below applies unchanged
    for (let i = 0; i < n; i++) {
      const s = 1 / Math.sqrt(pot.r[i]);
      store.re[i] *= s;
      store.im[i] *= s;
    }
  } else {
    fillW(pot, k, work.wRe, work.wIm);
    logDerivativeAtRadius(pot, l, work.wRe, work.wIm, work.tail, store);
  }
  const x = freeWaveNumber(k, options) * pot.radius;
  const j = sphericalBesselJ(l, x)[l];
  const y = sphericalBesselY(l, x)[l];
  // t = e^{i delta} sin delta = (S - 1)/(2i), S = e^{2i delta}
  const sMod = Math.exp(-2 * delta.im);
  const sr = sMod * Math.cos(2 * delta.re);
  const si = sMod * Math.sin(2 * delta.re);
  const tr = si / 2;
  const ti = -(sr - 1) / 2;
  // target = j + i t (j + i y) = j + i t j - t y
  const targetR = j - ti * j - tr * y;
  const targetI = tr * j - ti * y;
  // w = u / r = phi / sqrt(r)
  const sq = Math.sqrt(pot.radius);
  const wr = store.re[n - 1] / sq;
  const wi = store.im[n - 1] / sq;
  const d = wr * wr + wi * wi;
  const ar = (targetR * wr + targetI * wi) / d;
  const ai = (targetI * wr - targetR * wi) / d;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const s = 1 / Math.sqrt(pot.r[i]);
    const pr = store.re[i] * s;
    const pi = store.im[i] * s;
    re[i] = ar * pr - ai * pi;
    im[i] = ar * pi + ai * pr;
  }
  return { re, im };
}

/**
 * Plane-wave scattering amplitude f(theta) = (1/k) sum_l (2l+1) e^{i delta_l} sin delta_l P_l(cos theta)
 * (bohr when k is in 1/bohr), returned as [re, im].
 */
export function planeWaveAmplitude(shifts: PhaseShifts, cosTheta: number): [number, number] {
  const p = legendre(shifts.lmax, cosTheta);
  let fr = 0;
  let fi = 0;
  for (let l = 0; l <= shifts.lmax; l++) {
    const [tr, ti] = tMatrix(shifts.re[l], shifts.im[l]);
    fr += (2 * l + 1) * tr * p[l];
    fi += (2 * l + 1) * ti * p[l];
  }
  return [fr / shifts.waveNumber, fi / shifts.waveNumber];
}

/** t = e^{i delta} sin delta = (e^{2 i delta} - 1) / (2i) for complex delta = a + ib, as [re, im]. */
export function tMatrix(a: number, b: number): [number, number] {
  const mod = Math.exp(-2 * b);
  const sr = mod * Math.cos(2 * a);
  const si = mod * Math.sin(2 * a);
  return [si / 2, -(sr - 1) / 2];
}
