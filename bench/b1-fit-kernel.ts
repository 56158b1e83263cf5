/**
 * Benchmark B1 (the fit kernel), as specified in ../shared/bench/B1-fit-kernel.md: a closed-form
 * sum of P single-scattering shells (P = 4, 8, 16, 32) fitted by shellrank's Levenberg-Marquardt
 * (src/fit/levenberg-marquardt.ts) with the analytic Jacobian of the model, to the noisy data
 * written by the peer script (`python3 peer_b1.py --write-data FILE`).
 *
 *   npx tsx bench/b1-fit-kernel.ts --data FILE [--repeat N] [--warmup N] [--sizes 4 8 16 32]
 *                                  [--compare] [--libm] [--rows] [--python /usr/bin/python3]
 *                                  [--out FILE.json]
 *   npx tsx bench/b1-fit-kernel.ts --data FILE --parts [--fresh] [--libm] [--rows]
 *   npx tsx bench/b1-fit-kernel.ts --data FILE --check [--sizes ...]
 *
 * Prints one JSON line per P on stdout in the peer's format: {"P", "medianMs", "iterations",
 * "ssr", "params": {"s0sq", "e0", "expansion", "msrd": [...]}, "jac", "nfev", "njev", "status",
 * "repeats"}. "iterations" = Jacobians used for steps (the peer's njev); "nfev" = the first
 * evaluation plus every trial step. The timed region is one complete fit from the start values,
 * building the residual function included, reading the file excluded; the median of
 * `--repeat` (>= 7, default 9) fits after `--warmup` (default 20) untimed fits, so that the
 * JIT has compiled the hot loops; the very first (cold) fit is reported as "coldMs". Extra keys
 * beyond the peer's: "warmup", "coldMs", "cpuMedianMs" (median CPU time of the timed fits,
 * which other processes on a loaded machine disturb less than the wall-clock median).
 *
 * The model (modelPieces) evaluates every (point, shell) term once per new parameter vector and
 * keeps, besides the terms, the per-point sums the Jacobian needs, so that the Jacobian (asked
 * right after the residual at the same point) only scales stored numbers; it hands the Jacobian
 * to the fitter column-major (`jacobianColumns`), the layout the fitter works in.
 * --libm fits with the plain reference model instead (Math.exp/sin/cos, textbook derivatives,
 *   row-major Jacobian, nothing cached): slower, an independent check of the same minimum.
 * --rows gives the fast model's Jacobian row-major (`jacobian`), to time the fitter's transpose.
 * --parts times the residual, the Jacobian and J^T J separately (see timeParts).
 * --check compares the fast model with the reference model and the reference Jacobian with
 *   central differences, the table kernels with Math.*, and J^T J with plain dot products; exit
 *   status 1 when a tolerance is exceeded (see checkModel).
 *
 * With --compare the peer (`peer_b1.py --jac analytic`, run by --python, default the Debian
 * /usr/bin/python3 with python3-scipy) is run on the same data file in the same run, right after
 * our fits of each P so that both see the same machine load, with the same --repeat; a
 * side-by-side table (timings, ratio, agreement of ssr to 1e-6 relative and of every parameter to
 * 1e-4 absolute, the spec's condition for a timing to count) goes to stderr; --out writes both
 * sides and the comparison as one JSON document.
 *
 * Profile: node --cpu-prof --import tsx bench/b1-fit-kernel.ts --data FILE --sizes 32 --repeat 400
 * (the wall-clock medians on a machine shared with other jobs vary by tens of per cent between
 * runs: compare within one --compare run, or take medians of several).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { performance } from 'node:perf_hooks';
import { fitLeastSquares, type LeastSquaresProblem } from '../src/fit/levenberg-marquardt';
import { gramMatrixOfColumns, transposeInto } from '../src/fit/dense';

/** q^2 = k^2 - EK * e0 (the spec's 0.2624683 1/(Å^2 eV)). */
const EK = 0.2624683;
const SIZES = [4, 8, 16, 32];
/** --libm: fit with the plain reference model (Math.exp / sin / cos, row-major Jacobian). */
const USE_LIBM = process.argv.includes('--libm');
/** --rows: give the fitter the fast model's Jacobian row-major instead of column-major. */
const USE_ROWS = process.argv.includes('--rows');

// Table-driven exp and sin/cos for the model (the fitter itself uses no transcendental functions).
// Method: table-driven elementary functions, Tang, ACM Trans. Math. Softw. 15, 144 (1989).
// exp: x = (256 k + j) ln2/256 + r, |r| <= ln2/512, exp x = 2^k 2^(j/256) p4(r), p4 the degree-4
// Taylor polynomial (truncation r^5/120 < 4e-17 relative). sin/cos: x = j pi/128 + r,
// |r| <= pi/256, angle addition with tabulated sin, cos(j pi/128) and Taylor polynomials of degree
// 5 (sin r) and 6 (cos r) (truncation r^7/5040, r^8/40320 < 1e-17). Cody-Waite argument
// reduction: ln2 split into a 29-bit and a 53-bit part, pi/2 into parts of 31 and 32 significant
// bits, so that nf times the high parts is exact (for |x| < 50000 in sin/cos); the remainder of
// pi/2 (2.0e-21) is dropped, which changes r by less than 3e-17 for |x| < 25000 (the model's
// arguments are below 300). Splits checked in 60-digit decimal arithmetic.
// Checked by --check against Math.exp/sin/cos on 1e6 seeded random arguments (exp on [-40, 0],
// sin/cos on [0, 300]); see checkKernels for the tolerances.
const LN2_HI = 0.6931471806019545;
const LN2_LO = -4.2009150726810846e-11;
const PIO2_HI = 1.5707963267341256;
const PIO2_MID = 6.077100506303966e-11;
const EXP_STEPS = 256;
const SC_STEPS = 256; // table entries per 2 pi
const EXP_TABLE = Float64Array.from({ length: EXP_STEPS }, (_, j) => 2 ** (j / EXP_STEPS));
const POW2 = Float64Array.from({ length: 2200 }, (_, i) => 2 ** (i - 1100));
const SIN_TABLE = Float64Array.from({ length: SC_STEPS }, (_, j) => Math.sin((2 * j * Math.PI) / SC_STEPS));
const COS_TABLE = Float64Array.from({ length: SC_STEPS }, (_, j) => Math.cos((2 * j * Math.PI) / SC_STEPS));
/**
 * Adding and subtracting 1.5 * 2^52 rounds a double of magnitude below 2^51 to the nearest
 * integer without a branch. Math.round compiles to a compare-and-branch whose misprediction on
 * the irregular arguments of a fit cost about 20 ns per (point, shell) (measured: residual calls
 * early in a fit took twice as long as calls repeated at one parameter vector).
 */
const ROUNDING_SHIFT = 6755399441055744;
/**
 * The kernels' constants, read into local variables at the top of the hot loop. Written as
 * literals (or module constants, which V8 folds into literals), every double constant is
 * re-materialised in the loop body (two instructions each, about 25 per (point, shell)) because
 * the register allocator prefers that to a spill; values loaded from an array are ordinary
 * values that stay in registers or are spilled once. Measured: the model pass at P = 32 took
 * 144 us with literal constants and 115 us with these (same kernels, same machine).
 */
const KERNEL_CONSTANTS = Float64Array.from([
  EXP_STEPS / Math.LN2, // 0: exp, 1 / step
  LN2_HI / EXP_STEPS, // 1: exp, step (high part)
  LN2_LO / EXP_STEPS, // 2: exp, step (low part)
  ROUNDING_SHIFT, // 3
  SC_STEPS / (2 * Math.PI), // 4: sin/cos, 1 / step
  (4 * PIO2_HI) / SC_STEPS, // 5: sin/cos, step (high part)
  (4 * PIO2_MID) / SC_STEPS, // 6: sin/cos, step (low part)
  1 / 6, // 7
  1 / 24, // 8
  1 / 120, // 9
  1 / 720, // 10
  0.5, // 11
  1, // 12
  -708, // 13: exp below: 0 (Math.exp)
  709, // 14: exp above: overflow (Math.exp)
]);

/** exp x by the table method above (for --check; the model pass has it written out). */
function tableExp(x: number): number {
  const K = KERNEL_CONSTANTS;
  if (!(x > K[13] && x < K[14])) return Math.exp(x);
  const nf = x * K[0] + K[3] - K[3];
  const r = x - nf * K[1] - nf * K[2];
  const nInt = nf | 0;
  const p = K[12] + r * (K[12] + r * (K[11] + r * (K[7] + r * K[8])));
  return POW2[(nInt >> 8) + 1100] * EXP_TABLE[nInt & 255] * p;
}

/** [sin x, cos x] by the table method above, |x| < 25000 (for --check). */
function tableSinCos(x: number, out: Float64Array): void {
  const K = KERNEL_CONSTANTS;
  const nf = x * K[4] + K[3] - K[3];
  const r = x - nf * K[5] - nf * K[6];
  const t = (nf | 0) & 255;
  const r2 = r * r;
  const sr = r * (K[12] - r2 * (K[7] - r2 * K[9]));
  const cr = K[12] - r2 * (K[11] - r2 * (K[8] - r2 * K[10]));
  out[0] = SIN_TABLE[t] * cr + COS_TABLE[t] * sr;
  out[1] = COS_TABLE[t] * cr - SIN_TABLE[t] * sr;
}

interface BenchLine {
  P: number;
  medianMs: number;
  iterations: number;
  ssr: number;
  params: { s0sq: number; e0: number; expansion: number; msrd: number[] };
  jac: string;
  nfev: number;
  njev: number;
  status: string;
  repeats: number;
  warmup?: number;
  coldMs?: number;
  /** Median CPU time (user + system) of the timed fits, ms: less sensitive to other processes' load. */
  cpuMedianMs?: number;
}

/**
 * Working arrays of the B1 model for P shells on m points. The kernels below are top-level
 * functions that read these into locals: closures created afresh for every problem ran at half
 * the speed (V8 cannot specialise their code on the captured arrays; measured with --parts).
 *
 * One pass over (point, shell) at a new parameter vector (modelPieces) computes every term
 * S_ij = B_j(q_i) sin(arg_j(q_i)) and, per point, the sums over shells that the Jacobian needs, so
 * that the residual is a sum already done and the Jacobian (asked right after the residual at the
 * same point, the fitter's contract) only scales stored numbers: nothing transcendental is
 * evaluated twice, and no cosine or d ln A/dq table is stored.
 */
interface ModelState {
  P: number;
  m: number;
  n: number;
  k: Float64Array;
  y: Float64Array;
  /** k-weight k^2 per point. */
  w: Float64Array;
  r0: Float64Array;
  count: Float64Array;
  centre: Float64Array;
  /** Per point: q, dq/dde0. */
  q: Float64Array;
  dq: Float64Array;
  /**
   * Shell-major P x m: D[j m + i] = -2 k_i^2 q_i^2 S_ij with S_ij = B_j(q_i) sin(arg_j(q_i)), the
   * d/dmsrd_j column of the Jacobian without its factor s0sq.
   */
  D: Float64Array;
  /** Per point: sum_j S_ij, sum_j dS_ij/dq (total, through every q dependence), sum_j dS_ij/dalpha. */
  sumS: Float64Array;
  sumDq: Float64Array;
  sumDalpha: Float64Array;
  /** Per shell: R_j, N_j / R_j^2. */
  R: Float64Array;
  countOverR2: Float64Array;
  /** The spec's amplitude constants 0.6, -0.012, 0.15 and -0.024 (= 2 * -0.012), in an array for the reason of KERNEL_CONSTANTS. */
  amplitudeConstants: Float64Array;
  /** Parameters at which the pieces were last computed. */
  cached: Float64Array;
}

/**
 * Fill the pieces at p (skipped when p is unchanged). With B = A e, e = N/(q R^2)
 * exp(-2 q^2 msrd - 2 R/lambda), S = B sin(arg), C = B cos(arg):
 * - dS/dq = S (d ln A/dq - 1/q - 4 q msrd + 0.8 R/lambda^2) + C (2 R - 0.09 - 0.4/q^2), and
 *   S d ln A/dq = e sin(arg) dA/dq with dA/dq = -0.024 g (q - centre), g = 0.6 exp(-0.012 (q - centre)^2);
 * - dS/dexpansion = r0 dS/dR = r0 (S (-2/R - 2/lambda) + 2 q C) = (-2 S - 2 R S/lambda + 2 q R C) / (1 + expansion),
 *   since r0 = R / (1 + expansion).
 * So per point the sums over shells of S, S dlnA/dq, S msrd, S R, C and C R give both derivatives.
 */
function modelPieces(st: ModelState, p: Float64Array): void {
  const { P, m, n, k, w, centre, q, dq, D, sumS, sumDq, sumDalpha, R, countOverR2, r0, count, cached } = st;
  let same = true;
  for (let a = 0; a < n; a++) {
    if (cached[a] !== p[a]) {
      same = false;
      break;
    }
  }
  if (same) return;
  cached.set(p);
  const K = KERNEL_CONSTANTS;
  const EXP_INV = K[0];
  const EXP_HI = K[1];
  const EXP_LO = K[2];
  const SHIFT = K[3];
  const SC_INV = K[4];
  const SC_HI = K[5];
  const SC_LO = K[6];
  const C6 = K[7];
  const C24 = K[8];
  const C120 = K[9];
  const C720 = K[10];
  const HALF = K[11];
  const ONE = K[12];
  const EXP_LOW = K[13];
  const EXP_HIGH = K[14];
  const A = st.amplitudeConstants; // A_j(q) = 0.6 exp(-0.012 (q - centre_j)^2) + 0.15
  const AMP_PEAK = A[0];
  const AMP_EXPONENT = A[1];
  const AMP_FLOOR = A[2];
  const AMP_SLOPE = A[3]; // dA/dq = AMP_SLOPE g (q - centre), g the Gaussian part
  const pow2 = POW2;
  const expTable = EXP_TABLE;
  const sinTable = SIN_TABLE;
  const cosTable = COS_TABLE;
  const e0 = p[1];
  const scale = 1 + p[2];
  const invScale = 1 / scale;
  for (let j = 0; j < P; j++) {
    const Rj = r0[j] * scale;
    R[j] = Rj;
    countOverR2[j] = count[j] / (Rj * Rj);
  }
  for (let i = 0; i < m; i++) {
    const ki = k[i];
    let qi = Math.sqrt(Math.max(ki * ki - EK * e0, 0));
    let dqi = 0;
    if (qi >= 1e-9) dqi = (-0.5 * EK) / qi;
    else qi = ki;
    q[i] = qi;
    dq[i] = dqi;
    const il = 1 / (1 + 0.4 * qi);
    const invQ = 1 / qi;
    const minusTwoQ2 = -2 * qi * qi;
    const minusTwoIl = -2 * il;
    const twoQ = 2 * qi;
    const ds2Factor = -2 * qi * qi * w[i];
    const phase = -1.2 - 0.09 * qi + 0.4 * invQ;
    let sS = 0;
    let sSdlnA = 0;
    let sSs2 = 0;
    let sSR = 0;
    let sC = 0;
    let sCR = 0;
    for (let j = 0; j < P; j++) {
      const msrd = p[3 + j];
      const Rj = R[j];
      const d = qi - centre[j];
      // g = 0.6 exp(-0.012 d^2) and e = N/(q R^2) exp(-2 q^2 msrd - 2 R/lambda): tableExp written out.
      let y = AMP_EXPONENT * d * d;
      let g: number;
      if (y > EXP_LOW && y < EXP_HIGH) {
        const nf = y * EXP_INV + SHIFT - SHIFT;
        const r = y - nf * EXP_HI - nf * EXP_LO;
        const nInt = nf | 0;
        g = AMP_PEAK * pow2[(nInt >> 8) + 1100] * expTable[nInt & 255] * (ONE + r * (ONE + r * (HALF + r * (C6 + r * C24))));
      } else g = AMP_PEAK * Math.exp(y);
      y = minusTwoQ2 * msrd + minusTwoIl * Rj;
      let e = countOverR2[j] * invQ;
      if (y > EXP_LOW && y < EXP_HIGH) {
        const nf = y * EXP_INV + SHIFT - SHIFT;
        const r = y - nf * EXP_HI - nf * EXP_LO;
        const nInt = nf | 0;
        e *= pow2[(nInt >> 8) + 1100] * expTable[nInt & 255] * (ONE + r * (ONE + r * (HALF + r * (C6 + r * C24))));
      } else e *= Math.exp(y);
      // sin and cos of the argument x: tableSinCos written out.
      const x = twoQ * Rj + phase;
      const nf = x * SC_INV + SHIFT - SHIFT;
      const r = x - nf * SC_HI - nf * SC_LO;
      const t = (nf | 0) & 255;
      const r2 = r * r;
      const sr = r * (ONE - r2 * (C6 - r2 * C120));
      const cr = ONE - r2 * (HALF - r2 * (C24 - r2 * C720));
      const sinT = sinTable[t];
      const cosT = cosTable[t];
      const sinX = sinT * cr + cosT * sr;
      const cosX = cosT * cr - sinT * sr;
      const b = e * (g + AMP_FLOOR);
      const s = b * sinX;
      const c = b * cosX;
      D[j * m + i] = ds2Factor * s;
      sS += s;
      sSdlnA += e * sinX * (AMP_SLOPE * g * d);
      sSs2 += s * msrd;
      sSR += s * Rj;
      sC += c;
      sCR += c * Rj;
    }
    sumS[i] = sS;
    sumDq[i] = sSdlnA - invQ * sS - 4 * qi * sSs2 + 0.8 * il * il * sSR + 2 * sCR + (-0.09 - 0.4 * invQ * invQ) * sC;
    sumDalpha[i] = invScale * (2 * qi * sCR - 2 * sS - 2 * il * sSR);
  }
}

/** Residuals k^2 (s0sq sum_j S_ij - y_i). */
function modelResiduals(st: ModelState, p: Float64Array, out: Float64Array): void {
  modelPieces(st, p);
  const { m, w, y, sumS } = st;
  const s0sq = p[0];
  for (let i = 0; i < m; i++) out[i] = w[i] * (s0sq * sumS[i] - y[i]);
}

/**
 * Analytic Jacobian, column-major m x (P + 3): d/d s0sq, d/d e0 (via q), d/d expansion (via R),
 * d/d msrd_j = -2 s0sq k^2 q^2 S_ij = s0sq D_ij.
 */
function modelJacobianColumns(st: ModelState, p: Float64Array, out: Float64Array): void {
  modelPieces(st, p);
  const { P, m, w, dq, D, sumS, sumDq, sumDalpha } = st;
  const s0sq = p[0];
  for (let i = 0; i < m; i++) {
    const wi = w[i];
    out[i] = wi * sumS[i];
    out[m + i] = wi * s0sq * dq[i] * sumDq[i];
    out[2 * m + i] = wi * s0sq * sumDalpha[i];
  }
  const size = m * P;
  const offset = 3 * m;
  for (let t = 0; t < size; t++) out[offset + t] = s0sq * D[t];
}

/** The same Jacobian row-major (--rows: to time the fitter's transpose). */
function modelJacobianRows(st: ModelState, p: Float64Array, out: Float64Array): void {
  modelPieces(st, p);
  const { P, m, n, w, dq, D, sumS, sumDq, sumDalpha } = st;
  const s0sq = p[0];
  for (let i = 0; i < m; i++) {
    const wi = w[i];
    const row = i * n;
    out[row] = wi * sumS[i];
    out[row + 1] = wi * s0sq * dq[i] * sumDq[i];
    out[row + 2] = wi * s0sq * sumDalpha[i];
    for (let j = 0; j < P; j++) out[row + 3 + j] = s0sq * D[j * m + i];
  }
}

/** The fit range 3 <= k <= 14 of the spec: grid values and data there. */
function fitRange(kGrid: Float64Array, data: Float64Array): { k: Float64Array; y: Float64Array } {
  let m = 0;
  for (let i = 0; i < kGrid.length; i++) if (kGrid[i] >= 3 - 1e-9 && kGrid[i] <= 14 + 1e-9) m++;
  const k = new Float64Array(m);
  const y = new Float64Array(m);
  for (let i = 0, t = 0; i < kGrid.length; i++) {
    if (kGrid[i] >= 3 - 1e-9 && kGrid[i] <= 14 + 1e-9) {
      k[t] = kGrid[i];
      y[t] = data[i];
      t++;
    }
  }
  return { k, y };
}

/** Start values of the spec: s0sq 1, e0 0, expansion 0, every msrd_j 0.005. */
function startValues(P: number): Float64Array {
  const initial = new Float64Array(P + 3).fill(0.005);
  initial[0] = 1.0;
  initial[1] = 0.0;
  initial[2] = 0.0;
  return initial;
}

/**
 * The B1 problem for P shells: residual k^2 (chi(p) - y) on 3 <= k <= 14, parameters
 * [s0sq, e0, expansion, msrd_0 .. msrd_{P-1}], and its analytic Jacobian (column-major; row-major with
 * --rows). The pieces shared by the residual and the Jacobian are kept from the last residual
 * call and reused when the Jacobian is asked at the same point (as the peer does).
 */
function makeProblem(kGrid: Float64Array, data: Float64Array, P: number): LeastSquaresProblem {
  const { k, y } = fitRange(kGrid, data);
  const m = k.length;
  const n = P + 3;
  // Plain loops: Float64Array.from({ length }, f) and TypedArray.map take V8's generic slow path
  // (about 2.5 % of a P = 32 fit in the profile).
  const w = new Float64Array(m);
  for (let i = 0; i < m; i++) w[i] = k[i] * k[i];
  const r0 = new Float64Array(P);
  const count = new Float64Array(P);
  const centre = new Float64Array(P);
  for (let j = 0; j < P; j++) {
    r0[j] = 1.9 + 0.23 * j;
    count[j] = 2 + (j % 5);
    centre[j] = 5.0 + 0.1 * j;
  }
  const amplitudeConstants = new Float64Array(4);
  amplitudeConstants[0] = 0.6;
  amplitudeConstants[1] = -0.012;
  amplitudeConstants[2] = 0.15;
  amplitudeConstants[3] = -0.024;
  const st: ModelState = {
    P,
    m,
    n,
    k,
    y,
    w,
    r0,
    count,
    centre,
    q: new Float64Array(m),
    dq: new Float64Array(m),
    D: new Float64Array(m * P),
    sumS: new Float64Array(m),
    sumDq: new Float64Array(m),
    sumDalpha: new Float64Array(m),
    R: new Float64Array(P),
    countOverR2: new Float64Array(P),
    amplitudeConstants,
    cached: new Float64Array(n).fill(NaN),
  };
  const residuals = (p: Float64Array, out: Float64Array) => modelResiduals(st, p, out);
  if (USE_ROWS) return { nResiduals: m, initial: startValues(P), residuals, jacobian: (p, out) => modelJacobianRows(st, p, out) };
  return { nResiduals: m, initial: startValues(P), residuals, jacobianColumns: (p, out) => modelJacobianColumns(st, p, out) };
}

/**
 * The B1 model written plainly, as the spec states it: Math.exp / sin / cos, every piece
 * recomputed per call, the Jacobian row-major from the textbook derivatives (the peer's
 * formulas). It is the oracle of --check for the fast model above and the model of --libm.
 */
function makeReferenceProblem(kGrid: Float64Array, data: Float64Array, P: number): LeastSquaresProblem {
  const { k, y } = fitRange(kGrid, data);
  const m = k.length;
  const n = P + 3;
  const shell = (j: number) => ({ r0: 1.9 + 0.23 * j, count: 2 + (j % 5), centre: 5.0 + 0.1 * j });
  const point = (p: Float64Array, ki: number) => {
    const qRaw = Math.sqrt(Math.max(ki * ki - EK * p[1], 0));
    const live = qRaw >= 1e-9;
    return { q: live ? qRaw : ki, dq: live ? (-0.5 * EK) / qRaw : 0 };
  };
  /** B, arg, g for shell j at q (the peer's `pieces`). */
  const terms = (p: Float64Array, j: number, q: number) => {
    const { r0, count, centre } = shell(j);
    const R = r0 * (1 + p[2]);
    const lam = 1 + 0.4 * q;
    const g = 0.6 * Math.exp(-0.012 * (q - centre) ** 2);
    const B = ((count * (g + 0.15)) / (q * R * R)) * Math.exp(-2 * q * q * p[3 + j] - (2 * R) / lam);
    const arg = 2 * q * R - 1.2 - 0.09 * q + 0.4 / q;
    return { r0, R, lam, g, B, arg, centre };
  };
  return {
    nResiduals: m,
    initial: startValues(P),
    residuals(p, out) {
      for (let i = 0; i < m; i++) {
        const { q } = point(p, k[i]);
        let chi = 0;
        for (let j = 0; j < P; j++) {
          const { B, arg } = terms(p, j, q);
          chi += B * Math.sin(arg);
        }
        out[i] = k[i] * k[i] * (p[0] * chi - y[i]);
      }
    },
    jacobian(p, out) {
      const s0sq = p[0];
      for (let i = 0; i < m; i++) {
        const { q, dq } = point(p, k[i]);
        const w = k[i] * k[i];
        let sumS = 0;
        let sumE = 0;
        let sumA = 0;
        for (let j = 0; j < P; j++) {
          const { r0, R, lam, g, B, arg, centre } = terms(p, j, q);
          const S = B * Math.sin(arg);
          const C = B * Math.cos(arg);
          const dlnB = (-0.024 * g * (q - centre)) / (g + 0.15) - 1 / q - 4 * q * p[3 + j] + (0.8 * R) / (lam * lam);
          sumS += S;
          sumE += S * dlnB + C * (2 * R - 0.09 - 0.4 / (q * q));
          sumA += r0 * (S * (-2 / R - 2 / lam) + C * (2 * q));
          out[i * n + 3 + j] = -2 * s0sq * q * q * S * w;
        }
        out[i * n] = w * sumS;
        out[i * n + 1] = w * s0sq * dq * sumE;
        out[i * n + 2] = w * s0sq * sumA;
      }
    },
  };
}

/** The spec's convergence rule, as the peer sets it (ftol 1e-10, xtol = gtol = eps, 200 steps). */
const FIT_OPTIONS = { ftol: 1e-10, xtol: Number.EPSILON, gtol: Number.EPSILON, maxIterations: 200, maxEvaluations: 201 };

function fitOnce(k: Float64Array, y: Float64Array, P: number) {
  const problem = USE_LIBM ? makeReferenceProblem(k, y, P) : makeProblem(k, y, P);
  return fitLeastSquares(problem, FIT_OPTIONS);
}

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const h = s.length >> 1;
  return s.length % 2 ? s[h] : 0.5 * (s[h - 1] + s[h]);
}

interface Args {
  data: string;
  repeat: number;
  warmup: number;
  sizes: number[];
  compare: boolean;
  python: string;
  out?: string;
}

function parseArgs(argv: string[]): Args {
  const args: Args = { data: '', repeat: 9, warmup: 20, sizes: SIZES, compare: false, python: '/usr/bin/python3' };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--') continue;
    if (a === '--data') args.data = argv[++i];
    else if (a === '--repeat') args.repeat = Math.max(7, Number.parseInt(argv[++i], 10));
    else if (a === '--compare') args.compare = true;
    else if (a === '--warmup') args.warmup = Math.max(0, Number.parseInt(argv[++i], 10));
    else if (['--libm', '--rows', '--parts', '--fresh', '--check'].includes(a)) continue;
    else if (a === '--python') args.python = argv[++i];
    else if (a === '--out') args.out = argv[++i];
    else if (a === '--sizes') {
      const sizes: number[] = [];
      while (i + 1 < argv.length && /^\d+$/.test(argv[i + 1])) sizes.push(Number(argv[++i]));
      for (const s of sizes) if (!SIZES.includes(s)) throw new Error(`--sizes: ${s} is not one of ${SIZES.join(', ')}`);
      args.sizes = sizes;
    } else throw new Error(`unknown argument ${a}`);
  }
  if (!args.data) throw new Error('usage: b1-fit-kernel.ts --data FILE [--repeat N] [--sizes P ...] [--compare] [--out FILE]');
  if (!Number.isFinite(args.repeat)) throw new Error('--repeat needs an integer');
  if (!Number.isFinite(args.warmup)) throw new Error('--warmup needs an integer');
  return args;
}

function runOurs(args: Args, k: Float64Array, d: Record<string, number[]>, P: number): BenchLine {
  {
    const y = Float64Array.from(d[`P${P}`]);
    // Untimed: the first (cold) fit, kept as the reference for the timed ones, then warm-up fits so
    // that the timed fits run the JIT's optimised code (the steady state of a screening run).
    const cold0 = performance.now();
    const ref = fitOnce(k, y, P);
    const coldMs = performance.now() - cold0;
    for (let w = 0; w < args.warmup; w++) fitOnce(k, y, P);
    const times: number[] = [];
    const cpuTimes: number[] = [];
    let last = ref;
    for (let r = 0; r < args.repeat; r++) {
      const c0 = process.cpuUsage();
      const t0 = performance.now();
      last = fitOnce(k, y, P);
      times.push(performance.now() - t0);
      const c = process.cpuUsage(c0);
      cpuTimes.push((c.user + c.system) / 1000);
    }
    if (last.ssr !== ref.ssr) process.stderr.write(`warning: P=${P} timed fit differs from the first fit\n`);
    if (last.status !== 'converged') process.stderr.write(`warning: P=${P} status ${last.status}: ${last.message}\n`);
    const x = last.params;
    const line: BenchLine = {
      P,
      medianMs: Math.round(1e4 * median(times)) / 1e4,
      cpuMedianMs: Math.round(1e4 * median(cpuTimes)) / 1e4,
      iterations: last.iterations,
      ssr: last.ssr,
      params: { s0sq: x[0], e0: x[1], expansion: x[2], msrd: Array.from(x.subarray(3)) },
      jac: 'analytic',
      nfev: last.evaluations,
      njev: last.iterations,
      status: last.status,
      repeats: args.repeat,
      warmup: args.warmup,
      coldMs: Math.round(1e4 * coldMs) / 1e4,
    };
    process.stdout.write(`${JSON.stringify(line)}\n`);
    return line;
  }
}

/** The peer on the same data file for one P (run right after ours, so both see the same load). */
function runPeer(args: Args, P: number): BenchLine[] {
  const here = dirname(fileURLToPath(import.meta.url));
  const peer = resolve(here, '../../shared/bench/peer_b1.py');
  const res = spawnSync(
    args.python,
    [peer, '--data', args.data, '--jac', 'analytic', '--repeat', String(args.repeat), '--sizes', String(P)],
    { encoding: 'utf8' },
  );
  if (res.status !== 0) throw new Error(`peer failed (${args.python} ${peer}): ${res.stderr || res.error}`);
  if (res.stderr) process.stderr.write(res.stderr.replace(/^/gm, 'peer: '));
  return res.stdout
    .trim()
    .split('\n')
    .map((l) => JSON.parse(l) as BenchLine);
}

function compare(ours: BenchLine[], peer: BenchLine[]) {
  const rows = ours.map((o) => {
    const p = peer.find((x) => x.P === o.P)!;
    const ssrRel = Math.abs(o.ssr - p.ssr) / Math.abs(p.ssr);
    const a = [o.params.s0sq, o.params.e0, o.params.expansion, ...o.params.msrd];
    const b = [p.params.s0sq, p.params.e0, p.params.expansion, ...p.params.msrd];
    let maxParamDiff = 0;
    for (let i = 0; i < a.length; i++) maxParamDiff = Math.max(maxParamDiff, Math.abs(a[i] - b[i]));
    const agree = ssrRel <= 1e-6 && maxParamDiff <= 1e-4;
    return {
      P: o.P,
      oursMs: o.medianMs,
      peerMs: p.medianMs,
      speedup: p.medianMs / o.medianMs,
      oursIterations: o.iterations,
      peerIterations: p.iterations,
      oursNfev: o.nfev,
      peerNfev: p.nfev,
      ssrRelativeDifference: ssrRel,
      maxParamDifference: maxParamDiff,
      agree,
    };
  });
  const fmt = (v: number, d: number) => v.toFixed(d).padStart(9);
  process.stderr.write('    P   ours ms   peer ms   speedup  iters(o/p)  nfev(o/p)   ssr rel.diff  max |dparam|  agree\n');
  for (const r of rows) {
    process.stderr.write(
      `${String(r.P).padStart(5)} ${fmt(r.oursMs, 4)} ${fmt(r.peerMs, 4)} ${fmt(r.speedup, 2)}x ` +
        `${`${r.oursIterations}/${r.peerIterations}`.padStart(11)} ${`${r.oursNfev}/${r.peerNfev}`.padStart(10)} ` +
        `${r.ssrRelativeDifference.toExponential(2).padStart(14)} ${r.maxParamDifference.toExponential(2).padStart(13)}  ${r.agree ? 'yes' : 'NO'}\n`,
    );
  }
  return rows;
}

/**
 * --parts: time the pieces of one fit separately (microseconds per call, median of 201 calls
 * each): the residual at a new point, the Jacobian at that point, the Gram matrix J^T J (of the
 * column-major Jacobian, as the fitter computes it).
 * With --fresh every call gets a newly built problem, as every timed fit does.
 */
function timeParts(args: Args, k: Float64Array, d: Record<string, number[]>): void {
  for (const P of args.sizes) {
    const fresh = process.argv.includes('--fresh'); // a new problem per call, as in the timed fits
    const build = () => (USE_LIBM ? makeReferenceProblem : makeProblem)(k, Float64Array.from(d[`P${P}`]), P);
    let problem = build();
    const n = P + 3;
    const m = problem.nResiduals;
    const p = Float64Array.from(problem.initial);
    const f = new Float64Array(m);
    const jac = new Float64Array(m * n);
    const columns = new Float64Array(m * n);
    const gram = new Float64Array(n * n);
    const residualTimes: number[] = [];
    const jacobianTimes: number[] = [];
    const gramTimes: number[] = [];
    for (let r = 0; r < 201; r++) {
      if (fresh) problem = build();
      p[1] = 1e-3 * r; // a new point each time, so nothing is cached
      let t0 = performance.now();
      problem.residuals(p, f);
      residualTimes.push(performance.now() - t0);
      t0 = performance.now();
      if (problem.jacobianColumns) problem.jacobianColumns(p, columns);
      else {
        problem.jacobian!(p, jac);
        transposeInto(jac, m, n, columns);
      }
      jacobianTimes.push(performance.now() - t0);
      t0 = performance.now();
      gramMatrixOfColumns(columns, m, n, gram, f, jac);
      gramTimes.push(performance.now() - t0);
    }
    const us = (v: number[]) => Math.round(1e4 * median(v)) / 10;
    process.stdout.write(
      `${JSON.stringify({ P, m, n, residualUs: us(residualTimes), jacobianUs: us(jacobianTimes), gramUs: us(gramTimes), libm: USE_LIBM, rows: USE_ROWS })}\n`,
    );
  }
}

/**
 * --check: the fast model against the plain reference model (residuals and both Jacobian
 * layouts, at the start values, the spec's true values and perturbed points), and the reference
 * Jacobian against central differences of the reference residuals. Prints the largest
 * differences relative to the largest entry of each column; exits 1 above the tolerances
 * (1e-12 fast vs reference: rounding of the table kernels and of reordered sums; 1e-6 for the
 * differences: their truncation and rounding errors).
 */
function checkModel(args: Args, k: Float64Array, d: Record<string, number[]>): void {
  let ok = checkKernels();
  ok = checkGram() && ok;
  for (const P of args.sizes) {
    const y = Float64Array.from(d[`P${P}`]);
    const fast = makeProblem(k, y, P);
    const ref = makeReferenceProblem(k, y, P);
    const m = fast.nResiduals;
    const n = P + 3;
    const truth = new Float64Array(n);
    truth[0] = 0.85;
    truth[1] = 2.5;
    truth[2] = 0.004;
    for (let j = 0; j < P; j++) truth[3 + j] = 0.003 + 0.0004 * (j % 7);
    const points = [Float64Array.from(fast.initial), truth];
    for (let t = 0; t < 3; t++) points.push(truth.map((v, a) => v * (1 + 0.1 * Math.sin(7 * t + a)) + (a === 1 ? 1.5 * Math.cos(t) : 0)));
    let resDiff = 0;
    let jacDiff = 0;
    let fdDiff = 0;
    for (const p of points) {
      const fF = new Float64Array(m);
      const fR = new Float64Array(m);
      fast.residuals(p, fF);
      ref.residuals(p, fR);
      // Scale: the largest k^2 chi (the residual itself is small near the truth).
      let fScale = 0;
      for (let i = 0; i < m; i++) fScale = Math.max(fScale, Math.abs(fR[i] + k[i] * k[i] * y[i]));
      for (let i = 0; i < m; i++) resDiff = Math.max(resDiff, Math.abs(fF[i] - fR[i]) / fScale);
      const cols = new Float64Array(m * n);
      fast.jacobianColumns!(p, cols);
      const jR = new Float64Array(m * n);
      ref.jacobian!(p, jR);
      const plus = new Float64Array(m);
      const minus = new Float64Array(m);
      for (let a = 0; a < n; a++) {
        let scale = 0;
        for (let i = 0; i < m; i++) scale = Math.max(scale, Math.abs(jR[i * n + a]));
        for (let i = 0; i < m; i++) jacDiff = Math.max(jacDiff, Math.abs(cols[a * m + i] - jR[i * n + a]) / scale);
        // Step 1e-5 relative to the parameter or to its typical size (s0sq 1, e0 1 eV, expansion 0.01, msrd 0.001 Å^2).
        const h = 1e-5 * Math.max(Math.abs(p[a]), [1, 1, 0.01][a] ?? 0.001);
        const pp = Float64Array.from(p);
        pp[a] = p[a] + h;
        ref.residuals(pp, plus);
        pp[a] = p[a] - h;
        ref.residuals(pp, minus);
        for (let i = 0; i < m; i++) {
          const e = Math.abs((plus[i] - minus[i]) / (2 * h) - jR[i * n + a]) / scale;
          if (e > fdDiff) fdDiff = e;
        }
      }
    }
    // The row-major variant of the fast Jacobian must be the same numbers.
    const st = makeProblem(k, y, P);
    const cols = new Float64Array(m * n);
    st.residuals(truth, new Float64Array(m));
    st.jacobianColumns!(truth, cols);
    const rows = new Float64Array(m * n);
    const rowsOf = makeProblemRowsForCheck(k, y, P);
    rowsOf.residuals(truth, new Float64Array(m));
    rowsOf.jacobian!(truth, rows);
    let layoutDiff = 0;
    for (let i = 0; i < m; i++) for (let a = 0; a < n; a++) layoutDiff = Math.max(layoutDiff, Math.abs(rows[i * n + a] - cols[a * m + i]));
    const pass = resDiff <= 1e-12 && jacDiff <= 1e-12 && fdDiff <= 1e-6 && layoutDiff === 0;
    ok &&= pass;
    process.stdout.write(`${JSON.stringify({ P, residualVsReference: resDiff, jacobianVsReference: jacDiff, referenceVsCentralDifferences: fdDiff, rowsVsColumns: layoutDiff, pass })}\n`);
  }
  if (!ok) process.exitCode = 1;
}

/**
 * The table kernels against Math.exp / sin / cos on 1e6 seeded random arguments each (exp on
 * [-40, 0], sin/cos on [0, 300]): largest relative error of exp and absolute error of sin, cos.
 * Tolerances 1e-15 (about 4.5 units in the last place: the two libraries' own errors of up to
 * about 1 ulp each, the table entries' rounding and the polynomial's rounding; the truncation
 * errors are below 4e-17). Prints one JSON line; returns whether both pass.
 */
function checkKernels(): boolean {
  let state = 12345;
  const uniform = () => {
    // Park-Miller minimal standard generator (Park and Miller, Commun. ACM 31, 1192 (1988)).
    state = (state * 48271) % 2147483647;
    return state / 2147483647;
  };
  const sc = new Float64Array(2);
  let expErr = 0;
  let scErr = 0;
  for (let t = 0; t < 1e6; t++) {
    const x = -40 * uniform();
    const ref = Math.exp(x);
    expErr = Math.max(expErr, Math.abs(tableExp(x) - ref) / ref);
    const z = 300 * uniform();
    tableSinCos(z, sc);
    scErr = Math.max(scErr, Math.abs(sc[0] - Math.sin(z)), Math.abs(sc[1] - Math.cos(z)));
  }
  const pass = expErr <= 1e-15 && scErr <= 1e-15;
  process.stdout.write(`${JSON.stringify({ kernels: 'exp, sin/cos vs Math', expMaxRelativeError: expErr, sinCosMaxAbsoluteError: scErr, pass })}\n`);
  return pass;
}

/**
 * The fitter's J^T J and J^T v (gramMatrixOfColumns: the SIMD kernel above 2000 multiply-adds,
 * the scalar one below) against plain dot products, for shapes with odd and even m and n, n
 * below, at and above multiples of 4, on seeded random numbers. Tolerance 1e-13 relative to
 * sum_i |J_ia| |J_ib| (rounding of sums of m products in another order: m eps, m <= 400, about
 * 9e-14).
 */
function checkGram(): boolean {
  let state = 4242;
  const uniform = () => {
    state = (state * 48271) % 2147483647; // Park and Miller, Commun. ACM 31, 1192 (1988)
    return state / 2147483647 - 0.5;
  };
  let worst = 0;
  const shapes = [[221, 35], [221, 19], [221, 11], [221, 7], [220, 36], [37, 37], [400, 5], [60, 13], [30, 3], [2, 2], [1, 1]];
  for (const [m, n] of shapes) {
    const t = Float64Array.from({ length: m * n }, uniform);
    const v = Float64Array.from({ length: m }, uniform);
    const gram = new Float64Array(n * n);
    const gradient = new Float64Array(n);
    gramMatrixOfColumns(t, m, n, gram, v, gradient);
    for (let a = 0; a <= n; a++) {
      const x = a < n ? t.subarray(a * m, a * m + m) : v;
      for (let b = 0; b < n; b++) {
        let sum = 0;
        let scale = 0;
        for (let i = 0; i < m; i++) {
          sum += x[i] * t[b * m + i];
          scale += Math.abs(x[i] * t[b * m + i]);
        }
        const got = a < n ? gram[a * n + b] : gradient[b];
        worst = Math.max(worst, Math.abs(got - sum) / scale);
      }
    }
  }
  const pass = worst <= 1e-13;
  process.stdout.write(`${JSON.stringify({ gram: 'J^T J and J^T v vs dot products', shapes: shapes.length, maxRelativeError: worst, pass })}\n`);
  return pass;
}

/** The fast model with its row-major Jacobian, whatever --rows says (for --check). */
function makeProblemRowsForCheck(kGrid: Float64Array, data: Float64Array, P: number): LeastSquaresProblem {
  const problem = makeProblem(kGrid, data, P);
  if (problem.jacobian) return problem;
  const { k, y } = fitRange(kGrid, data);
  const m = k.length;
  const n = P + 3;
  const columns = new Float64Array(m * n);
  return {
    nResiduals: m,
    initial: problem.initial,
    residuals: problem.residuals,
    jacobian(p, out) {
      problem.jacobianColumns!(p, columns);
      transposeInto(columns, n, m, out);
    },
  };
}

function main(): void {
  const args = parseArgs(process.argv.slice(2));
  const d = JSON.parse(readFileSync(args.data, 'utf8')) as Record<string, number[]>;
  const k = Float64Array.from(d.k);
  if (process.argv.includes('--parts')) {
    timeParts(args, k, d);
    return;
  }
  if (process.argv.includes('--check')) {
    checkModel(args, k, d);
    return;
  }
  const ours: BenchLine[] = [];
  const peer: BenchLine[] = [];
  for (const P of args.sizes) {
    ours.push(runOurs(args, k, d, P));
    if (args.compare) peer.push(...runPeer(args, P));
  }
  if (args.compare || args.out) {
    const comparison = args.compare ? compare(ours, peer) : [];
    if (args.out) {
      writeFileSync(
        args.out,
        `${JSON.stringify({ benchmark: 'B1-fit-kernel', node: process.version, data: args.data, ours, peer, comparison }, null, 2)}\n`,
      );
    }
  }
}

main();
