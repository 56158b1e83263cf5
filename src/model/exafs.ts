/**
 * The single-scattering EXAFS equation (docs/methods.md; Sayers, Stern and Lytle, Phys. Rev. Lett. 27,
 * 1204 (1971), with the cumulant expansion of Bunker, Nucl. Instrum. Methods 207, 437 (1983)):
 *
 *   chi(k) = sum_j s0sq N_j |f_j(q)| / (q R_j^2) exp(-2 q^2 s2_j + 2/3 q^4 c4_j) exp(-2 R_j / lambda_j(q))
 *            * sin(2 q R_j + phi_j(q) - 4/3 q^3 c3_j),
 *   q = sqrt(k^2 - 0.2624683 * e0)  (e0 = E0 shift in eV; q = k where the radicand is < 0 or k ~ 0),
 *
 * with |f_j|, phi_j and lambda_j from a ScatteringTable (computed at the structure's distance) and
 * interpolated to q by cubic Hermite. Partial derivatives with respect to every parameter are
 * analytic (used by the fitter):
 *   d/d s0sq = chi_j/s0sq,  d/d N_j = chi_j/N_j,  d/d s2_j = -2 q^2 chi_j,  d/d c4_j = 2/3 q^4 chi_j,
 *   d/d R_j = P D [(-2/R - 2/lambda) sin u + 2q cos u],  d/d c3_j = -4/3 q^3 P D cos u,
 *   d/d e0 = (dchi/dq)(dq/de0), dq/de0 = -0.2624683 / (2q),
 * where P = s0sq N |f| / (q R^2), D = the damping exponentials, u = the sine's argument.
 */
import { K2_PER_EV } from '../core/constants';
import { InputError } from '../core/errors';
import { cubicUniform } from '../numeric/interpolate';
import { uniformGridOffset } from '../numeric/fourier';
import type { ScatteringTable } from '../scatter/provider';

/** Parameters of one path. */
export interface PathParameters {
  /** Degeneracy N. */
  n: number;
  /** Distance R, Å. */
  r: number;
  /** sigma^2, Å^2. */
  msrd: number;
  /** Third cumulant, Å^3. */
  c3: number;
  /** Fourth cumulant, Å^4. */
  c4: number;
}

export interface ModelParameters {
  /** S0^2. */
  s0sq: number;
  /** E0 shift, eV. */
  e0: number;
  paths: PathParameters[];
}

/** A path ready for evaluation: its parameters and its scattering table. */
export interface ModelPath {
  table: ScatteringTable;
}

/** Derivative columns returned by {@link evaluateModel} when asked for them. */
export interface ModelDerivatives {
  s0sq: Float64Array;
  e0: Float64Array;
  /** Per path: d chi / d n, r, msrd, c3, c4. */
  paths: { n: Float64Array; r: Float64Array; msrd: Float64Array; c3: Float64Array; c4: Float64Array }[];
}

interface TableGrid { x0: number; dx: number }

function gridOf(table: ScatteringTable): TableGrid {
  const { step } = uniformGridOffset(table.k);
  return { x0: table.k[0], dx: step };
}

/** The summed chi(k) on `k` (one array), optionally also the per-path contributions. */
export function simulateChi(k: Float64Array, tables: readonly ScatteringTable[], params: ModelParameters): Float64Array {
  return evaluateModel(k, tables, params).chi;
}

/**
 * Evaluate the model on `k`. With `withDerivatives`, also return the analytic partial
 * derivatives; with `perPath`, the contribution of every path.
 */
export function evaluateModel(
  k: Float64Array,
  tables: readonly ScatteringTable[],
  params: ModelParameters,
  options: { withDerivatives?: boolean; perPath?: boolean } = {},
): { chi: Float64Array; perPath?: Float64Array[]; derivatives?: ModelDerivatives } {
  if (tables.length !== params.paths.length) {
    throw new InputError(`the model has ${params.paths.length} paths but ${tables.length} scattering tables`);
  }
  const nk = k.length;
  const chi = new Float64Array(nk);
  const perPath = options.perPath ? tables.map(() => new Float64Array(nk)) : undefined;
  const want = Boolean(options.withDerivatives);
  const derivatives: ModelDerivatives | undefined = want
    ? {
        s0sq: new Float64Array(nk),
        e0: new Float64Array(nk),
        paths: tables.map(() => ({
          n: new Float64Array(nk), r: new Float64Array(nk), msrd: new Float64Array(nk), c3: new Float64Array(nk), c4: new Float64Array(nk),
        })),
      }
    : undefined;
  // q for every k, once
  const q = new Float64Array(nk);
  const dqde0 = new Float64Array(nk);
  for (let i = 0; i < nk; i++) {
    const q2 = k[i] * k[i] - K2_PER_EV * params.e0;
    if (k[i] < 1e-9 || q2 <= 0) { q[i] = 0; dqde0[i] = 0; }
    else { q[i] = Math.sqrt(q2); dqde0[i] = -K2_PER_EV / (2 * q[i]); }
  }
  const amplitude = new Float64Array(2);
  const phase = new Float64Array(2);
  const lambda = new Float64Array(2);
  const { s0sq } = params;
  for (let j = 0; j < tables.length; j++) {
    const table = tables[j];
    const { x0, dx } = gridOf(table);
    const { n, r, msrd, c3, c4 } = params.paths[j];
    const pathChi = perPath ? perPath[j] : undefined;
    const d = derivatives?.paths[j];
    for (let i = 0; i < nk; i++) {
      const qi = q[i];
      if (qi === 0) continue;
      cubicUniform(table.amplitude, x0, dx, qi, amplitude);
      cubicUniform(table.phase, x0, dx, qi, phase);
      cubicUniform(table.meanFreePath, x0, dx, qi, lambda);
      const q2 = qi * qi;
      const q3 = q2 * qi;
      const base = (n * amplitude[0]) / (qi * r * r); // without s0sq
      const exponent = -2 * q2 * msrd + (2 / 3) * q2 * q2 * c4 - (2 * r) / lambda[0];
      const damp = Math.exp(exponent);
      const u = 2 * qi * r + phase[0] - (4 / 3) * q3 * c3;
      const s = Math.sin(u);
      const c = Math.cos(u);
      const pd = s0sq * base * damp;
      const value = pd * s;
      chi[i] += value;
      if (pathChi) pathChi[i] = value;
      if (derivatives && d) {
        derivatives.s0sq[i] += base * damp * s;
        d.n[i] = n !== 0 ? value / n : s0sq * (amplitude[0] / (qi * r * r)) * damp * s;
        d.r[i] = pd * ((-2 / r - 2 / lambda[0]) * s + 2 * qi * c);
        d.msrd[i] = -2 * q2 * value;
        d.c3[i] = -(4 / 3) * q3 * pd * c;
        d.c4[i] = (2 / 3) * q2 * q2 * value;
        const dlnA = amplitude[0] !== 0 ? amplitude[1] / amplitude[0] : 0;
        const dExponent = -4 * qi * msrd + (8 / 3) * q3 * c4 + (2 * r * lambda[1]) / (lambda[0] * lambda[0]);
        const dchidq = pd * ((dlnA - 1 / qi + dExponent) * s + (2 * r + phase[1] - 4 * q2 * c3) * c);
        derivatives.e0[i] += dchidq * dqde0[i];
      }
    }
  }
  return { chi, perPath, derivatives };
}
