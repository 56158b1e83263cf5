/**
 * Anderson mixing of a fixed-point iteration x -> F(x) (Anderson, J. ACM 12, 547 (1965); in the
 * "type II" / Pulay-DIIS form of Eyert, J. Comput. Phys. 124, 271 (1996)).
 *
 * With residuals R_k = F(x_k) - x_k and differences dX_k = x_{k+1} - x_k, dR_k = R_{k+1} - R_k
 * over the last m steps, the coefficients gamma minimise || R_m - sum_k gamma_k dR_k ||
 * (weighted norm), and the next input is
 *     x_{m+1} = x_m + beta R_m - sum_k gamma_k (dX_k + beta dR_k).
 * With no history this is linear mixing x + beta R.
 */

/** Mutable history owned by one caller (one SCF run); create with {@link createAndersonMixer}. */
export interface AndersonMixer {
  readonly beta: number;
  readonly depth: number;
  readonly weight: Float64Array;
  previousInput: Float64Array | null;
  previousResidual: Float64Array | null;
  inputSteps: Float64Array[];
  residualSteps: Float64Array[];
}

/**
 * @param weight non-negative weight of each component in the residual norm.
 * @param beta linear mixing fraction, 0 < beta <= 1.
 * @param depth number of previous steps kept.
 */
export function createAndersonMixer(weight: Float64Array, beta: number, depth: number): AndersonMixer {
  return { beta, depth, weight, previousInput: null, previousResidual: null, inputSteps: [], residualSteps: [] };
}

/** Drops the history (e.g. after a step that made things worse). */
export function resetMixer(mixer: AndersonMixer): void {
  mixer.previousInput = null;
  mixer.previousResidual = null;
  mixer.inputSteps = [];
  mixer.residualSteps = [];
}

/**
 * Next input from the current input and its residual; records both in the history.
 * Does not modify `input` or `residual`.
 */
export function andersonNext(mixer: AndersonMixer, input: Float64Array, residual: Float64Array): Float64Array {
  const n = input.length;
  const { beta, weight } = mixer;
  if (mixer.previousInput && mixer.previousResidual) {
    const dx = new Float64Array(n);
    const dr = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      dx[i] = input[i] - mixer.previousInput[i];
      dr[i] = residual[i] - mixer.previousResidual[i];
    }
    mixer.inputSteps.push(dx);
    mixer.residualSteps.push(dr);
    if (mixer.inputSteps.length > mixer.depth) {
      mixer.inputSteps.shift();
      mixer.residualSteps.shift();
    }
  }
  mixer.previousInput = input.slice();
  mixer.previousResidual = residual.slice();
  const m = mixer.residualSteps.length;
  const next = new Float64Array(n);
  for (let i = 0; i < n; i++) next[i] = input[i] + beta * residual[i];
  if (m === 0) return next;
  // Normal equations A gamma = b, A_jk = <dR_j, dR_k>, b_j = <dR_j, R>.
  const a = new Float64Array(m * m);
  const b = new Float64Array(m);
  for (let j = 0; j < m; j++) {
    const dj = mixer.residualSteps[j];
    let bj = 0;
    for (let i = 0; i < n; i++) bj += weight[i] * dj[i] * residual[i];
    b[j] = bj;
    for (let k = 0; k <= j; k++) {
      const dk = mixer.residualSteps[k];
      let s = 0;
      for (let i = 0; i < n; i++) s += weight[i] * dj[i] * dk[i];
      a[j * m + k] = s;
      a[k * m + j] = s;
    }
  }
  let trace = 0;
  for (let j = 0; j < m; j++) trace += a[j * m + j];
  for (let j = 0; j < m; j++) a[j * m + j] += 1e-12 * trace; // Tikhonov guard against collinear steps
  const gamma = solveSymmetric(a, b, m);
  if (!gamma) return next;
  for (let j = 0; j < m; j++) {
    const g = gamma[j];
    const dx = mixer.inputSteps[j];
    const dr = mixer.residualSteps[j];
    for (let i = 0; i < n; i++) next[i] -= g * (dx[i] + beta * dr[i]);
  }
  return next;
}

/** Gaussian elimination with partial pivoting on a small dense system; null when singular. */
function solveSymmetric(a: Float64Array, b: Float64Array, m: number): Float64Array | null {
  const mat = a.slice();
  const x = b.slice();
  for (let col = 0; col < m; col++) {
    let pivot = col;
    for (let row = col + 1; row < m; row++) if (Math.abs(mat[row * m + col]) > Math.abs(mat[pivot * m + col])) pivot = row;
    const p = mat[pivot * m + col];
    if (!(Math.abs(p) > 0)) return null;
    if (pivot !== col) {
      for (let k = 0; k < m; k++) {
        const t = mat[col * m + k];
        mat[col * m + k] = mat[pivot * m + k];
        mat[pivot * m + k] = t;
      }
      const t = x[col];
      x[col] = x[pivot];
      x[pivot] = t;
    }
    for (let row = col + 1; row < m; row++) {
      const factor = mat[row * m + col] / p;
      for (let k = col; k < m; k++) mat[row * m + k] -= factor * mat[col * m + k];
      x[row] -= factor * x[col];
    }
  }
  for (let row = m - 1; row >= 0; row--) {
    let s = x[row];
    for (let k = row + 1; k < m; k++) s -= mat[row * m + k] * x[k];
    x[row] = s / mat[row * m + row];
  }
  for (let j = 0; j < m; j++) if (!Number.isFinite(x[j])) return null;
  return x;
}
