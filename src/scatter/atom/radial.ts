/**
 * Bound states of the radial Kohn-Sham equation in a spherical potential v(r), hartree units.
 *
 * Non-relativistic: -u''/2 + [v + l(l+1)/(2r^2)] u = E u, u = r R. On the log grid
 * (x = ln r, u = r^(1/2) phi) this becomes phi'' = g(x) phi with
 * g = 2 r^2 (v - E) + (l + 1/2)^2, which is integrated by Numerov's method
 * (Numerov, Astron. Nachr. 230, 359 (1927); the log-grid form e.g. in Koonin, Computational
 * Physics (1986), ch. 3, and Giannozzi's lecture notes on numerical methods in quantum mechanics).
 *
 * Scalar-relativistic (Koelling and Harmon, J. Phys. C 10, 3107 (1977): mass-velocity and Darwin
 * terms, spin-orbit dropped by averaging over j = l +- 1/2): with M = 1 + (E - v)/(2c^2),
 * P = u and Q = (P' - P/r)/(2M) (Q/c is the small component),
 *     P' = P/r + 2 M Q,     Q' = -Q/r + [l(l+1)/(2 M r^2) + v - E] P,
 * integrated on the log grid by the fifth-order implicit Adams-Moulton formula (exact 2x2 solve
 * per step, the system being linear); near a point nucleus P ~ r^gamma,
 * gamma = sqrt(l(l+1) + 1 - (Z/c)^2).
 *
 * Eigenvalues: outward integration to the outermost classical turning point, inward
 * integration from deep in the forbidden region, continuity of u there; the node count of the
 * outward part brackets the energy (bisection), the derivative mismatch at the matching
 * point gives the first-order energy correction
 *     dE = u(rc) [u'_out(rc) - u'_in(rc)] / (2 int u^2 dr)
 * (equivalently P(rc) [Q_out - Q_in] / int (P^2 + Q^2/c^2) dr), which is applied while it stays
 * inside the bracket (Newton with bisection safeguard).
 */
import { ComputationError } from '../../core/errors';
import { SPEED_OF_LIGHT_AU } from '../../core/constants';
import type { LogGrid } from './grid';
import { subshellName } from './configuration';

/** One bound state. */
export interface BoundState {
  /** Eigenvalue in hartree. */
  energy: number;
  /** u(r) = r R(r) (large component for the scalar-relativistic equation), normalised with Q. */
  p: Float64Array;
  /** Q/c, the small component, or null for the non-relativistic equation. */
  smallComponent: Float64Array | null;
}

/** What to solve for. */
export interface BoundStateRequest {
  n: number;
  l: number;
  /** Nuclear charge (for the behaviour at the origin). */
  z: number;
  relativistic: boolean;
  /** Starting guess for the energy in hartree (e.g. the previous SCF iteration's value). */
  energyGuess?: number;
  /** Relative accuracy of the eigenvalue. Default 1e-12. */
  relativeTolerance?: number;
}

/** The inward integration starts where the WKB decay factor from the turning point reaches e^-45. */
const FORBIDDEN_DECAY = 45;
const MAX_SHOTS = 400;

interface Shot {
  /** 'ok', or the trial energy is below every classically allowed region, or above the grid. */
  status: 'ok' | 'tooLow' | 'tooHigh';
  nodes: number;
  correction: number;
}

/** Work arrays reused across shots and eigenvalue searches on one grid; see {@link createRadialWorkspace}. */
export interface RadialWorkspace {
  phi: Float64Array;
  q: Float64Array;
  f: Float64Array;
  a12: Float64Array;
  a21: Float64Array;
}

/** Scratch arrays for {@link solveBoundState} on a grid of n points (reuse to avoid allocation). */
export function createRadialWorkspace(n: number): RadialWorkspace {
  return {
    phi: new Float64Array(n),
    q: new Float64Array(n),
    f: new Float64Array(n),
    a12: new Float64Array(n),
    a21: new Float64Array(n),
  };
}

/**
 * Outermost index where the kinetic energy E - v - l(l+1)/(2r^2) is positive, or -1.
 * Uses g = 2r^2 (v - E) + l(l+1) (< 0 where classically allowed).
 */
function outerTurningPoint(r: Float64Array, v: Float64Array, energy: number, ll1: number): number {
  for (let i = r.length - 1; i >= 0; i--) {
    if (2 * r[i] * r[i] * (v[i] - energy) + ll1 < 0) return i;
  }
  return -1;
}

/** First index beyond `from` where the WKB decay integral exceeds FORBIDDEN_DECAY (capped at n-1). */
function inwardStart(r: Float64Array, v: Float64Array, energy: number, ll1: number, h: number, from: number): number {
  const n = r.length;
  let decay = 0;
  for (let i = from + 1; i < n; i++) {
    const g = 2 * r[i] * r[i] * (v[i] - energy) + ll1;
    if (g > 0) decay += h * Math.sqrt(g);
    if (decay > FORBIDDEN_DECAY) return i;
  }
  return n - 1;
}

function shootNumerov(grid: LogGrid, v: Float64Array, l: number, z: number, energy: number, ws: RadialWorkspace): Shot {
  const { r, h, n } = grid;
  const ll1 = l * (l + 1);
  const icl = outerTurningPoint(r, v, energy, ll1);
  if (icl < 2) return { status: 'tooLow', nodes: 0, correction: 0 };
  if (icl > n - 4) return { status: 'tooHigh', nodes: 0, correction: 0 };
  const iinf = Math.max(inwardStart(r, v, energy, ll1, h, icl), icl + 3);
  const { phi, f } = ws;
  const h12 = (h * h) / 12;
  const lh2 = (l + 0.5) * (l + 0.5);
  // Numerov in the variable y = f phi: y_{i+1} = (12 / f_i - 10) y_i - y_{i-1}, which keeps the
  // division out of the recurrence.
  const { a12: coefficient } = ws;
  for (let i = 0; i <= iinf; i++) {
    const fi = 1 - h12 * (2 * r[i] * r[i] * (v[i] - energy) + lh2);
    f[i] = fi;
    coefficient[i] = 12 / fi - 10;
  }
  // Outward: phi ~ r^(l+1/2) (1 - Z r / (l+1)) at the origin.
  let yPrevious = f[0] * Math.pow(r[0], l + 0.5) * (1 - (z * r[0]) / (l + 1));
  let y = f[1] * Math.pow(r[1], l + 0.5) * (1 - (z * r[1]) / (l + 1));
  phi[0] = yPrevious;
  phi[1] = y;
  let nodes = 0;
  for (let i = 1; i < icl; i++) {
    const next = coefficient[i] * y - yPrevious;
    if (next * y < 0) nodes++;
    phi[i + 1] = next;
    yPrevious = y;
    y = next;
    if (Math.abs(next) > 1e250) {
      for (let k = 0; k <= i + 1; k++) phi[k] *= 1e-250;
      yPrevious *= 1e-250;
      y *= 1e-250;
    }
  }
  for (let i = 0; i <= icl; i++) phi[i] /= f[i];
  const matchValue = phi[icl];
  const outBelow = phi[icl - 1];
  // Inward from a hard wall at iinf, deep in the forbidden region.
  for (let i = iinf + 1; i < n; i++) phi[i] = 0;
  phi[iinf] = 0;
  phi[iinf - 1] = 1e-200;
  yPrevious = 0;
  y = 1e-200 * f[iinf - 1];
  for (let i = iinf - 1; i > icl; i--) {
    const next = coefficient[i] * y - yPrevious;
    phi[i - 1] = next;
    yPrevious = y;
    y = next;
    if (Math.abs(next) > 1e100) {
      for (let k = i - 1; k <= iinf; k++) phi[k] *= 1e-100;
      yPrevious *= 1e-100;
      y *= 1e-100;
    }
  }
  phi[iinf - 1] = 1e-200 * f[iinf - 1];
  for (let i = icl; i < iinf; i++) phi[i] /= f[i];
  if (matchValue === 0 || phi[icl] === 0) return { status: 'tooLow', nodes, correction: 0 };
  const scale = matchValue / phi[icl];
  for (let i = icl; i <= iinf; i++) phi[i] *= scale;
  phi[icl - 1] = outBelow;
  // Numerov residual at the matching point = h * (phi'_in - phi'_out) in x.
  const residual = f[icl + 1] * phi[icl + 1] + f[icl - 1] * phi[icl - 1] + 10 * f[icl] * phi[icl] - 12 * phi[icl];
  let norm = 0;
  for (let i = 0; i <= iinf; i++) norm += phi[i] * phi[i] * r[i] * r[i];
  norm *= h;
  const correction = (-phi[icl] * residual) / (2 * h * norm);
  return { status: 'ok', nodes, correction };
}

/** Adams-Moulton (5th order) weights: y+ = y + h/720 (251 F+ + 646 F - 264 F- + 106 F-- - 19 F---). */
const AM0 = 251 / 720;
const AM1 = 646 / 720;
const AM2 = -264 / 720;
const AM3 = 106 / 720;
const AM4 = -19 / 720;

/**
 * Integrates dP/dx = P + a12 Q, dQ/dx = a21 P - Q (x = ln r) with the implicit Adams-Moulton
 * formula (the system is linear, so each step is an exact 2x2 solve) from index `from` to `to`
 * (either direction). P and Q must hold the starting values at from, from - s, from - 2s and
 * from - 3s (s = step direction). Rescales everything traversed when P grows past 1e250.
 * @returns the number of sign changes of P met on the way.
 */
function adamsMoulton(
  p: Float64Array,
  q: Float64Array,
  a12: Float64Array,
  a21: Float64Array,
  from: number,
  to: number,
  h: number,
): number {
  const s = to > from ? 1 : -1;
  const hs = s * h;
  const c = hs * AM0;
  const m11 = 1 - c;
  const m22 = 1 + c;
  const history = (k: number, which: 0 | 1): number => (which === 0 ? p[k] + a12[k] * q[k] : a21[k] * p[k] - q[k]);
  let dp0 = history(from, 0);
  let dp1 = history(from - s, 0);
  let dp2 = history(from - 2 * s, 0);
  let dp3 = history(from - 3 * s, 0);
  let dq0 = history(from, 1);
  let dq1 = history(from - s, 1);
  let dq2 = history(from - 2 * s, 1);
  let dq3 = history(from - 3 * s, 1);
  let pi = p[from];
  let qi = q[from];
  let nodes = 0;
  for (let i = from; i !== to; i += s) {
    const j = i + s;
    const rp = pi + hs * (AM1 * dp0 + AM2 * dp1 + AM3 * dp2 + AM4 * dp3);
    const rq = qi + hs * (AM1 * dq0 + AM2 * dq1 + AM3 * dq2 + AM4 * dq3);
    const b12 = a12[j];
    const b21 = a21[j];
    const m12 = -c * b12;
    const m21 = -c * b21;
    const inverse = 1 / (m11 * m22 - m12 * m21);
    let pj = (rp * m22 - m12 * rq) * inverse;
    let qj = (m11 * rq - m21 * rp) * inverse;
    if (pj * pi < 0) nodes++;
    dp3 = dp2;
    dp2 = dp1;
    dp1 = dp0;
    dp0 = pj + b12 * qj;
    dq3 = dq2;
    dq2 = dq1;
    dq1 = dq0;
    dq0 = b21 * pj - qj;
    if (Math.abs(pj) > 1e250) {
      const lo = Math.min(from - 3 * s, j);
      const hi = Math.max(from - 3 * s, j);
      for (let k = lo; k <= hi; k++) {
        p[k] *= 1e-250;
        q[k] *= 1e-250;
      }
      pj *= 1e-250;
      qj *= 1e-250;
      dp0 *= 1e-250;
      dp1 *= 1e-250;
      dp2 *= 1e-250;
      dp3 *= 1e-250;
      dq0 *= 1e-250;
      dq1 *= 1e-250;
      dq2 *= 1e-250;
      dq3 *= 1e-250;
    }
    p[j] = pj;
    q[j] = qj;
    pi = pj;
    qi = qj;
  }
  return nodes;
}

function shootScalarRelativistic(grid: LogGrid, v: Float64Array, l: number, z: number, energy: number, ws: RadialWorkspace): Shot {
  const { r, h, n } = grid;
  const ll1 = l * (l + 1);
  const icl = outerTurningPoint(r, v, energy, ll1);
  if (icl < 5) return { status: 'tooLow', nodes: 0, correction: 0 };
  if (icl > n - 6) return { status: 'tooHigh', nodes: 0, correction: 0 };
  const iinf = Math.max(inwardStart(r, v, energy, ll1, h, icl), icl + 5);
  const c = SPEED_OF_LIGHT_AU;
  const inv2c2 = 1 / (2 * c * c);
  const { phi: p, q, a12, a21 } = ws;
  for (let i = 0; i <= iinf; i++) {
    const mass = 1 + (energy - v[i]) * inv2c2;
    const twoMassR = 2 * mass * r[i];
    a12[i] = twoMassR;
    a21[i] = r[i] * (v[i] - energy) + ll1 / twoMassR;
  }
  // Outward start, point-nucleus limit: P = r^gamma and, from the first equation with
  // 2 M r -> Z / c^2 at the nucleus, Q / P = (gamma - 1) c^2 / Z.
  const zc = z / c;
  const gamma = Math.sqrt(ll1 + 1 - zc * zc);
  const qOverP = ((gamma - 1) * c * c) / z;
  for (let i = 0; i < 4; i++) {
    p[i] = Math.exp(gamma * i * h); // (r_i / r_0)^gamma
    q[i] = qOverP * p[i];
  }
  const nodes = adamsMoulton(p, q, a12, a21, 3, icl, h);
  const matchP = p[icl];
  const matchQ = q[icl];
  // Inward start: decaying WKB solution, dP/dx = -sqrt(g) P, Q = (dP/dx - P) / (2 M r).
  for (let i = iinf + 1; i < n; i++) {
    p[i] = 0;
    q[i] = 0;
  }
  let amplitude = 1e-200;
  for (let k = 0; k < 4; k++) {
    const i = iinf - k;
    const g = Math.max(2 * r[i] * r[i] * (v[i] - energy) + ll1, 0);
    if (k > 0) amplitude *= Math.exp(h * Math.sqrt(g));
    p[i] = amplitude;
    q[i] = ((-Math.sqrt(g) - 1) * amplitude) / a12[i];
  }
  adamsMoulton(p, q, a12, a21, iinf - 3, icl, h);
  if (matchP === 0 || p[icl] === 0) return { status: 'tooLow', nodes, correction: 0 };
  const scale = matchP / p[icl];
  const inwardQ = q[icl] * scale;
  for (let i = icl; i <= iinf; i++) {
    p[i] *= scale;
    q[i] *= scale;
  }
  const c2 = c * c;
  let norm = 0;
  for (let i = 0; i <= iinf; i++) norm += (p[i] * p[i] + (q[i] * q[i]) / c2) * r[i];
  norm *= h;
  const correction = (matchP * (matchQ - inwardQ)) / norm;
  q[icl] = 0.5 * (matchQ + inwardQ);
  return { status: 'ok', nodes, correction };
}

/**
 * Lowest value of v + l(l+1)/(2r^2) on the grid: no eigenvalue of the non-relativistic equation
 * lies below it; for the scalar-relativistic one it is a safe starting bracket, tightened by the
 * positive-mass bound in solveBoundState.
 */
function energyFloor(r: Float64Array, v: Float64Array, l: number): number {
  let floor = Infinity;
  const ll1 = l * (l + 1);
  for (let i = 0; i < r.length; i++) {
    const e = v[i] + ll1 / (2 * r[i] * r[i]);
    if (e < floor) floor = e;
  }
  return floor;
}

function midpoint(low: number, high: number): number {
  // Geometric mean for wide negative brackets (eigenvalues span many decades), else arithmetic.
  const highCapped = Math.min(high, -1e-6);
  if (low < 0 && highCapped < 0 && low / highCapped > 8) return -Math.sqrt(low * highCapped);
  return 0.5 * (low + high);
}

/**
 * Finds the bound state (n, l) of the potential v on the grid.
 * @param grid logarithmic grid.
 * @param v total potential in hartree at the grid points (including -Z/r); bound states are
 *   sought below max(0, v at the last grid point).
 * @param workspace optional scratch arrays from {@link createRadialWorkspace} (same grid length).
 * @throws ComputationError when no bound state with n - l - 1 nodes exists below the
 *   potential at the edge of the grid, or the search does not converge.
 */
export function solveBoundState(
  grid: LogGrid,
  v: Float64Array,
  request: BoundStateRequest,
  workspace?: RadialWorkspace,
): BoundState {
  const { n: nq, l, z, relativistic } = request;
  if (!(Number.isInteger(nq) && Number.isInteger(l) && l >= 0 && nq > l)) {
    throw new ComputationError(`invalid quantum numbers n = ${nq}, l = ${l}`);
  }
  const targetNodes = nq - l - 1;
  const tolerance = request.relativeTolerance ?? 1e-12;
  const ws = workspace && workspace.phi.length === grid.n ? workspace : createRadialWorkspace(grid.n);
  const shoot = relativistic ? shootScalarRelativistic : shootNumerov;
  let low = energyFloor(grid.r, v, l);
  if (relativistic) {
    // The relativistic mass M = 1 + (E - v)/(2c^2) must stay positive on the whole grid;
    // below that the equation describes no electron state.
    let vMax = -Infinity;
    for (let i = 0; i < grid.n; i++) if (v[i] > vMax) vMax = v[i];
    low = Math.max(low, vMax - 2 * SPEED_OF_LIGHT_AU * SPEED_OF_LIGHT_AU * (1 - 1e-9));
  }
  let high = Math.max(v[grid.n - 1], 0);
  let energy = request.energyGuess !== undefined && request.energyGuess > low && request.energyGuess < high ? request.energyGuess : midpoint(low, high);
  for (let shot = 0; shot < MAX_SHOTS; shot++) {
    const result = shoot(grid, v, l, z, energy, ws);
    if (result.status === 'tooLow' || (result.status === 'ok' && result.nodes < targetNodes)) {
      low = energy;
      energy = midpoint(low, high);
    } else if (result.status === 'tooHigh' || result.nodes > targetNodes) {
      high = energy;
      energy = midpoint(low, high);
    } else {
      const de = result.correction;
      if (de > 0) low = energy;
      else high = energy;
      if (Math.abs(de) <= tolerance * Math.max(1, Math.abs(energy))) {
        // The wavefunction is that of `energy`; the corrected eigenvalue is second-order accurate.
        return finish(grid, ws, energy + de, relativistic);
      }
      const next = energy + de;
      energy = next > low && next < high ? next : midpoint(low, high);
    }
    if (high - low <= 1e-15 * Math.max(1, Math.abs(low))) break;
  }
  throw new ComputationError(
    `no bound ${subshellName(nq, l)} state found (eigenvalue search ended between ${low.toPrecision(8)} and ` +
      `${high.toPrecision(8)} hartree; the level is unbound in this potential, or more diffuse than the grid, ` +
      `which ends at ${grid.r[grid.n - 1].toPrecision(4)} bohr)`,
  );
}

/** Normalises the last shot's wavefunction: int (P^2 + (Q/c)^2) dr = 1. */
function finish(grid: LogGrid, ws: RadialWorkspace, energy: number, relativistic: boolean): BoundState {
  const { r, h, n } = grid;
  const p = new Float64Array(n);
  if (!relativistic) {
    let norm = 0;
    for (let i = 0; i < n; i++) norm += ws.phi[i] * ws.phi[i] * r[i] * r[i];
    const scale = 1 / Math.sqrt(norm * h);
    for (let i = 0; i < n; i++) p[i] = ws.phi[i] * Math.sqrt(r[i]) * scale;
    return { energy, p, smallComponent: null };
  }
  const small = new Float64Array(n);
  const c = SPEED_OF_LIGHT_AU;
  let norm = 0;
  for (let i = 0; i < n; i++) {
    p[i] = ws.phi[i];
    small[i] = ws.q[i] / c;
    norm += (p[i] * p[i] + small[i] * small[i]) * r[i];
  }
  const scale = 1 / Math.sqrt(norm * h);
  for (let i = 0; i < n; i++) {
    p[i] *= scale;
    small[i] *= scale;
  }
  return { energy, p, smallComponent: small };
}
