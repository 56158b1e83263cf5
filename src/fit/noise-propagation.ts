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
 * role the reduced chi-square plays in the usual recipe (design.md, Statistics), here with the
 * expected value computed for the actual windows instead of from Stern's count of independent
 * points (that count assumes box windows; for a Hann k window with a 1/Å taper the effective
 * number is about half of it, measured in test/fit-exafs-synthetic.test.ts).
 * Because m is estimated from the residuals, confidence intervals use Student's t with the
 * effective degrees of freedom of ssr by the Welch-Satterthwaite approximation (Satterthwaite,
 * Biometrics Bulletin 2, 110 (1946)):
 *     nu_eff = tr(M)^2 / tr(M^2),  M = (I - H) S,
 *     tr(M^2) = tr(S^2) - 2 tr(A J^T S^2 J) + tr(A B A B),  B = J^T S J.
 * Only the P' blocks (one per data set; different data sets have independent noise) and J are
 * needed; the m x m matrix S is never formed.
 */
import { gramMatrix, gramMatrixOfColumns } from './dense';
import { fQuantileUpper } from './statistics';

/** d residual / d(data point in units of its noise) for the rows of one data set. */
export interface NoiseBlock {
  /** First residual row of the block and number of rows. */
  offset: number;
  rows: number;
  /** Number of data points that reach these rows. */
  columns: number;
  /** rows x columns, row-major. */
  matrix: Float64Array;
  /** tr(S_block^2) = ||P'^T P'||_F^2 (depends on the data layout only, so computed once). */
  traceSquared: number;
  /** tr(S_block) = ||P'||_F^2. */
  trace: number;
}

/** Build a block, computing its two traces. */
export function noiseBlock(offset: number, rows: number, columns: number, matrix: Float64Array): NoiseBlock {
  let trace = 0;
  for (let i = 0; i < matrix.length; i++) trace += matrix[i] * matrix[i];
  // ||P^T P||_F^2 = ||P P^T||_F^2 from the smaller Gram matrix (the SIMD kernel of ./dense.ts);
  // the row-major P read as column-major is P^T, whose Gram matrix is P P^T
  const n = Math.min(rows, columns);
  const gram = new Float64Array(n * n);
  if (rows <= columns) gramMatrixOfColumns(matrix, columns, rows, gram);
  else gramMatrix(matrix, rows, columns, gram);
  let traceSquared = 0;
  for (let i = 0; i < gram.length; i++) traceSquared += gram[i] * gram[i];
  return { offset, rows, columns, matrix, trace, traceSquared };
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
    const { offset, rows, columns, matrix } = block;
    if (offset + rows > nResiduals) throw new RangeError(`noise block rows ${offset}+${rows} exceed ${nResiduals} residuals`);
    const g = new Float64Array(nu * columns);
    for (let r = 0; r < rows; r++) {
      const jRow = (offset + r) * nu;
      const pRow = r * columns;
      for (let a = 0; a < nu; a++) {
        const jv = jacobian[jRow + a];
        if (jv === 0) continue;
        const ga = a * columns;
        for (let c = 0; c < columns; c++) g[ga + c] += jv * matrix[pRow + c];
      }
    }
    for (let a = 0; a < nu; a++) {
      for (let b = a; b < nu; b++) {
        let s = 0;
        for (let c = 0; c < columns; c++) s += g[a * columns + c] * g[b * columns + c];
        gramNoise[a * nu + b] += s;
        if (a !== b) gramNoise[b * nu + a] += s;
      }
    }
    // P'_d G^T: rows x nu
    const pg = new Float64Array(rows * nu);
    for (let r = 0; r < rows; r++) {
      const pRow = r * columns;
      for (let a = 0; a < nu; a++) {
        let s = 0;
        const ga = a * columns;
        for (let c = 0; c < columns; c++) s += matrix[pRow + c] * g[ga + c];
        pg[r * nu + a] = s;
      }
    }
    for (let a = 0; a < nu; a++) {
      for (let b = a; b < nu; b++) {
        let s = 0;
        for (let r = 0; r < rows; r++) s += pg[r * nu + a] * pg[r * nu + b];
        gramNoiseSquared[a * nu + b] += s;
        if (a !== b) gramNoiseSquared[b * nu + a] += s;
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
