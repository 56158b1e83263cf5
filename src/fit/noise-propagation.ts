/**
 * Parameter errors with the measurement noise carried through the linear map from the data to
 * the residuals: the covariance of a least-squares estimate under correlated noise.
 *
 * An EXAFS fit in R or q space minimises residuals r = P (chi_model - chi_data) where P (the
 * k-weight and window, the Fourier transform, the selection of an R or q range, the division by
 * the noise level) is linear and fixed. White noise of chi(k) with per-point standard deviation
 * eps becomes residual noise with covariance S = P' P'^T, P' = eps dr/dchi_data; oversampled R
 * points are strongly correlated. Linearising the model, r ~ J dp + P' n, the estimate is
 * dp = -A J^T P' n with A = (J^T J)^-1, so (the "sandwich" covariance of least squares with a
 * misspecified weight matrix; e.g. Seber and Wild, Nonlinear Regression (1989), section 2.1.4,
 * section number from memory):
 *     V = A (J^T S J) A.
 * Noise alone leaves, on average, a sum of squares E[ssr] = tr((I - H) S) with the hat matrix
 * H = J A J^T (trace of a quadratic form of a Gaussian vector), and the misfit ratio
 *     m = ssr / E[ssr]
 * is 1 when the model explains the data to within the noise. The reported standard errors are
 * sqrt(diag(V) m): the covariance scaled by the misfit the noise cannot account for, which is the
 * role the reduced chi-square plays in the usual recipe (docs/methods.md, Statistics), here with the
 * expected value computed for the actual windows instead of from Stern's count of independent
 * points (that count assumes box windows; for a Hann k window with a 1/Å taper the effective
 * number is about half of it, measured in test/fit-noise-propagation.test.ts).
 * Because m is estimated from the residuals, confidence intervals use Student's t with the
 * effective degrees of freedom of ssr by the Welch-Satterthwaite approximation (Satterthwaite,
 * Biometrics Bulletin 2, 110 (1946); reference from memory):
 *     nu_effective = tr(M)^2 / tr(M^2),  M = (I - H) S,
 *     tr(M^2) = tr(S^2) - 2 tr(A J^T S^2 J) + tr(A B A B),  B = J^T S J.
 * Only the blocks of S (one per data set; different data sets have independent noise), each
 * formed once and kept as a low-rank factor, and J are needed; the whole m x m S never is.
 */
import { gramMatrixOfColumns } from './dense';
import { fQuantileUpper } from './statistics';

/**
 * How the data noise of one data set reaches its residual rows, kept as a low-rank factor of the
 * residual covariance: S_block ~ F F^T with F (rows x rank) from a pivoted Cholesky factorisation
 * (Harbrecht, Peters and Schneider, Appl. Numer. Math. 62, 428 (2012); reference from memory), stopped when the trace
 * left out falls below 1e-13 of tr(S). Windowed transforms make S of R- and q-space rows
 * numerically low-rank (about 30-50 for R ranges of 2-3 Å), so the products of every fit cost
 * rows x rank instead of rows x data points.
 */
export interface NoiseBlock {
  /** First residual row of the block and number of rows. */
  offset: number;
  rows: number;
  /** Columns of F. */
  rank: number;
  /** F^T (rank x rows, row-major): each factor column contiguous (dense factor). */
  factor: Float64Array;
  /** F^T F (rank x rank), for J^T S^2 J = (J^T F)(F^T F)(J^T F)^T. */
  factorGram: Float64Array;
  /**
   * Instead of `factor`: when every row of P' has at most one non-zero (k-space rows), F = P'
   * itself, held as (row, value) pairs per column; F^T F is then diagonal (`factorGram` holds
   * its diagonal).
   */
  sparse?: { start: Int32Array; row: Int32Array; value: Float64Array };
  /** tr(S_block) and tr(S_block^2), exact (from S before factorisation). */
  trace: number;
  traceSquared: number;
}

/**
 * Build a block from P' (rows x columns, row-major: d residual / d data point, in units of the
 * data noise), so that S = P' P'^T.
 */
export function noiseBlock(offset: number, rows: number, columns: number, matrix: Float64Array): NoiseBlock {
  const sparse = sparseColumns(rows, columns, matrix);
  if (sparse) {
    const factorGram = new Float64Array(columns);
    let trace = 0;
    for (let c = 0; c < columns; c++) {
      for (let t = sparse.start[c]; t < sparse.start[c + 1]; t++) factorGram[c] += sparse.value[t] ** 2;
      trace += factorGram[c];
    }
    // S = P' P'^T has the same non-zero eigenvalues as the diagonal P'^T P'
    const traceSquared = factorGram.reduce((a, g) => a + g * g, 0);
    return { offset, rows, rank: columns, factor: new Float64Array(0), factorGram, trace, traceSquared, sparse };
  }
  // the row-major P' read as column-major is P'^T, whose Gram matrix is S = P' P'^T
  const covariance = new Float64Array(rows * rows);
  gramMatrixOfColumns(matrix, columns, rows, covariance);
  let trace = 0;
  let traceSquared = 0;
  for (let i = 0; i < rows; i++) trace += covariance[i * rows + i];
  for (let i = 0; i < covariance.length; i++) traceSquared += covariance[i] * covariance[i];
  const { factor, rank } = pivotedCholesky(covariance, rows, 1e-13 * trace);
  const factorGram = new Float64Array(rank * rank);
  for (let a = 0; a < rank; a++) {
    for (let b = a; b < rank; b++) {
      const v = dotAt(factor, a * rows, factor, b * rows, rows);
      factorGram[a * rank + b] = v;
      factorGram[b * rank + a] = v;
    }
  }
  return { offset, rows, rank, factor, factorGram, trace, traceSquared };
}

/** The columns of P' as (row, value) lists when no row has more than one non-zero; else null. */
function sparseColumns(rows: number, columns: number, matrix: Float64Array): NoiseBlock['sparse'] | null {
  const columnOf = new Int32Array(rows).fill(-1);
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      if (matrix[r * columns + c] === 0) continue;
      if (columnOf[r] >= 0) return null;
      columnOf[r] = c;
    }
  }
  const start = new Int32Array(columns + 1);
  for (let r = 0; r < rows; r++) if (columnOf[r] >= 0) start[columnOf[r] + 1]++;
  for (let c = 0; c < columns; c++) start[c + 1] += start[c];
  const fill = start.slice(0, columns);
  const row = new Int32Array(start[columns]);
  const value = new Float64Array(start[columns]);
  for (let r = 0; r < rows; r++) {
    const c = columnOf[r];
    if (c < 0) continue;
    row[fill[c]] = r;
    value[fill[c]++] = matrix[r * columns + c];
  }
  return { start, row, value };
}

/**
 * Pivoted Cholesky factorisation of a symmetric positive semi-definite n x n matrix: columns f_q
 * with S ~ sum_q f_q f_q^T, choosing the largest remaining diagonal each step, until the remaining
 * trace is at most `tolerance`. Returns F^T (rank x n, row-major).
 */
function pivotedCholesky(matrix: Float64Array, n: number, tolerance: number): { factor: Float64Array; rank: number } {
  const remaining = new Float64Array(n);
  for (let i = 0; i < n; i++) remaining[i] = matrix[i * n + i];
  const columns: Float64Array[] = [];
  for (;;) {
    let left = 0;
    let pivot = 0;
    for (let i = 0; i < n; i++) {
      left += Math.max(remaining[i], 0);
      if (remaining[i] > remaining[pivot]) pivot = i;
    }
    if (!(left > tolerance) || !(remaining[pivot] > 0) || columns.length === n) break;
    const scale = 1 / Math.sqrt(remaining[pivot]);
    const column = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let v = matrix[i * n + pivot];
      for (const f of columns) v -= f[i] * f[pivot];
      column[i] = v * scale;
    }
    for (let i = 0; i < n; i++) remaining[i] -= column[i] * column[i];
    remaining[pivot] = 0;
    columns.push(column);
  }
  const factor = new Float64Array(columns.length * n);
  columns.forEach((f, q) => factor.set(f, q * n));
  return { factor, rank: columns.length };
}

export interface PropagatedErrors {
  /** V m (nu x nu, row-major): the covariance the standard errors come from. */
  covariance: Float64Array;
  /** V = A J^T S J A, the covariance from the noise estimate alone. */
  noiseCovariance: Float64Array;
  /** E[ssr] for noise alone: tr((I - H) S). */
  expectedSumOfSquares: number;
  /** ssr / E[ssr]. */
  misfitRatio: number;
  /** Welch-Satterthwaite degrees of freedom of ssr. */
  effectiveDegreesOfFreedom: number;
}

/**
 * Propagate the data noise to the parameters (formulas in the module header).
 * @param jacobian m x nu row-major, in the units of the residuals, at the solution.
 * @param inverseGram A = (J^T J)^-1 (nu x nu).
 * @param sumOfSquares ssr of the residuals at the solution.
 * Returns null when the inputs leave nothing to propagate (no parameters, no noise, no freedom).
 */
export function propagateNoise(
  jacobian: Float64Array,
  nResiduals: number,
  nVaried: number,
  inverseGram: Float64Array,
  sumOfSquares: number,
  blocks: readonly NoiseBlock[],
): PropagatedErrors | null {
  const nu = nVaried;
  if (nu === 0 || blocks.length === 0) return null;
  // B = J^T S J = sum over blocks of G G^T with G = J_d^T P'_d (nu x columns);
  // C = J^T S^2 J = sum of (P'_d G^T)^T (P'_d G^T)
  const gramNoise = new Float64Array(nu * nu);
  const gramNoiseSquared = new Float64Array(nu * nu);
  let traceS = 0;
  let traceS2 = 0;
  for (const block of blocks) {
    traceS += block.trace;
    traceS2 += block.traceSquared;
    const { offset, rows, rank, factor, factorGram, sparse } = block;
    if (offset + rows > nResiduals) throw new RangeError(`noise block rows ${offset}+${rows} exceed ${nResiduals} residuals`);
    // E = J_d^T F (nu x rank); B += E E^T; C += E (F^T F) E^T
    const jt = new Float64Array(nu * rows);
    for (let r = 0; r < rows; r++) for (let a = 0; a < nu; a++) jt[a * rows + r] = jacobian[(offset + r) * nu + a];
    const e = new Float64Array(nu * rank);
    const ef = new Float64Array(nu * rank);
    if (sparse) {
      for (let a = 0; a < nu; a++) {
        for (let q = 0; q < rank; q++) {
          let v = 0;
          for (let t = sparse.start[q]; t < sparse.start[q + 1]; t++) v += jt[a * rows + sparse.row[t]] * sparse.value[t];
          e[a * rank + q] = v;
          ef[a * rank + q] = v * factorGram[q];
        }
      }
    } else {
      for (let a = 0; a < nu; a++) for (let q = 0; q < rank; q++) e[a * rank + q] = dotAt(jt, a * rows, factor, q * rows, rows);
      for (let a = 0; a < nu; a++) for (let q = 0; q < rank; q++) ef[a * rank + q] = dotAt(e, a * rank, factorGram, q * rank, rank);
    }
    for (let a = 0; a < nu; a++) {
      for (let b = a; b < nu; b++) {
        const s = dotAt(e, a * rank, e, b * rank, rank);
        const s2 = dotAt(ef, a * rank, e, b * rank, rank);
        gramNoise[a * nu + b] += s;
        gramNoiseSquared[a * nu + b] += s2;
        if (a !== b) {
          gramNoise[b * nu + a] += s;
          gramNoiseSquared[b * nu + a] += s2;
        }
      }
    }
  }
  if (!(traceS > 0)) return null;
  const multiply = (x: Float64Array, y: Float64Array): Float64Array => {
    const out = new Float64Array(nu * nu);
    for (let i = 0; i < nu; i++) {
      for (let k = 0; k < nu; k++) {
        const v = x[i * nu + k];
        if (v === 0) continue;
        for (let j = 0; j < nu; j++) out[i * nu + j] += v * y[k * nu + j];
      }
    }
    return out;
  };
  const trace = (x: Float64Array): number => {
    let s = 0;
    for (let i = 0; i < nu; i++) s += x[i * nu + i];
    return s;
  };
  const ab = multiply(inverseGram, gramNoise);
  const noiseCovariance = multiply(ab, inverseGram);
  const expectedSumOfSquares = traceS - trace(ab);
  const traceM2 = traceS2 - 2 * trace(multiply(inverseGram, gramNoiseSquared)) + trace(multiply(ab, ab));
  if (!(expectedSumOfSquares > 0) || !(traceM2 > 0)) return null;
  const misfitRatio = sumOfSquares / expectedSumOfSquares;
  const covariance = Float64Array.from(noiseCovariance, (v) => v * misfitRatio);
  return {
    covariance,
    noiseCovariance,
    expectedSumOfSquares,
    misfitRatio,
    effectiveDegreesOfFreedom: (expectedSumOfSquares * expectedSumOfSquares) / traceM2,
  };
}

/**
 * Half-width factor of a two-sided confidence interval from a standard error estimated with
 * `dof` degrees of freedom: Student's t quantile t_{(1+level)/2, dof}, found as the square root of
 * the F(1, dof) upper quantile (t^2 is F-distributed with 1 and dof degrees of freedom).
 */
export function studentTFactor(level: number, dof: number): number {
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must lie in (0, 1), got ${level}`);
  if (!(dof > 0)) return NaN;
  return Math.sqrt(fQuantileUpper(1 - level, 1, dof));
}

/** sum_i x[xo + i] y[yo + i], i < n (kept small so the engine optimises it as one loop). */
function dotAt(x: Float64Array, xo: number, y: Float64Array, yo: number, n: number): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += x[xo + i] * y[yo + i];
  return s;
}
