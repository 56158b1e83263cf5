/**
 * Small dense linear-algebra kernels over Float64Array for the least-squares fitter.
 *
 * Matrices are row-major: element (i, j) of an r x c matrix A sits at A[i * c + j].
 * The fitter works with the normal equations of a tall Jacobian J (m x n, m >= n, n of a few
 * tens at most), so the kernels here are: the Gram matrix J^T J and the gradient J^T r, the
 * Cholesky factorisation of a symmetric positive-definite matrix with triangular solves, and
 * the inverse of such a matrix. Algorithms: Golub and Van Loan, Matrix Computations, 4th ed.
 * (2013), Alg. 4.2.1 (Cholesky, gaxpy form) and section 3.1 (triangular solves) (numbers from memory).
 *
 * Hand-written rather than built on ml-matrix because the fitter calls these on 30 x 30
 * matrices many times per fit, where object allocation and bounds checks dominate (see the
 * B1 benchmark profile). All functions write into caller-supplied buffers and never allocate.
 */

/**
 * G = J^T J (full symmetric n x n).
 *
 * J is first copied into column-major scratch (`columns`, length m * n, allocated when absent)
 * so that every entry is a contiguous dot product; entries are computed in 3 x 3 blocks (nine
 * accumulators per pass over the rows: six loads feed nine multiply-adds, and the accumulators
 * stay in registers). Blocks at the edges fall back to single dot products. The block size was
 * chosen by timing 2x2, 4x2, 3x3 and 4x4 blocks on a 221 x 35 Jacobian (the B1 benchmark).
 *
 * @param jac row-major m x n Jacobian.
 * @param m rows (residuals), n columns (parameters).
 * @param gram output n x n, overwritten.
 * @param columns optional scratch of length >= m * n, overwritten.
 * @param vector optional v (length m): when given with `gradient`, also g = J^T v (length n).
 */
export function gramMatrix(
  jac: Float64Array,
  m: number,
  n: number,
  gram: Float64Array,
  columns?: Float64Array,
  vector?: Float64Array,
  gradient?: Float64Array,
): void {
  const t = columns ?? new Float64Array(m * n);
  for (let i = 0; i < m; i++) {
    const row = i * n;
    for (let a = 0; a < n; a++) t[a * m + i] = jac[row + a];
  }
  const full = n - (n % 3);
  for (let a = 0; a < full; a += 3) {
    const c0 = a * m;
    const c1 = c0 + m;
    const c2 = c1 + m;
    for (let b = a; b < full; b += 3) {
      const d0 = b * m;
      const d1 = d0 + m;
      const d2 = d1 + m;
      let p00 = 0;
      let p01 = 0;
      let p02 = 0;
      let p10 = 0;
      let p11 = 0;
      let p12 = 0;
      let p20 = 0;
      let p21 = 0;
      let p22 = 0;
      for (let i = 0; i < m; i++) {
        const u = t[d0 + i];
        const v = t[d1 + i];
        const w = t[d2 + i];
        let x = t[c0 + i];
        p00 += x * u;
        p01 += x * v;
        p02 += x * w;
        x = t[c1 + i];
        p10 += x * u;
        p11 += x * v;
        p12 += x * w;
        x = t[c2 + i];
        p20 += x * u;
        p21 += x * v;
        p22 += x * w;
      }
      const r0 = a * n;
      const r1 = r0 + n;
      const r2 = r1 + n;
      gram[r0 + b] = p00;
      gram[r0 + b + 1] = p01;
      gram[r0 + b + 2] = p02;
      gram[r1 + b] = p10;
      gram[r1 + b + 1] = p11;
      gram[r1 + b + 2] = p12;
      gram[r2 + b] = p20;
      gram[r2 + b + 1] = p21;
      gram[r2 + b + 2] = p22;
    }
  }
  // Columns past the last full block: three dot products per pass while possible.
  for (let b = full; b < n; b++) {
    const cb = b * m;
    let a = 0;
    for (; a + 2 < full; a += 3) {
      const c0 = a * m;
      const c1 = c0 + m;
      const c2 = c1 + m;
      let s0 = 0;
      let s1 = 0;
      let s2 = 0;
      for (let i = 0; i < m; i++) {
        const u = t[cb + i];
        s0 += t[c0 + i] * u;
        s1 += t[c1 + i] * u;
        s2 += t[c2 + i] * u;
      }
      gram[a * n + b] = s0;
      gram[(a + 1) * n + b] = s1;
      gram[(a + 2) * n + b] = s2;
    }
    for (; a <= b; a++) {
      const ca = a * m;
      let s0 = 0;
      let s1 = 0;
      let i = 0;
      for (; i + 1 < m; i += 2) {
        s0 += t[ca + i] * t[cb + i];
        s1 += t[ca + i + 1] * t[cb + i + 1];
      }
      if (i < m) s0 += t[ca + i] * t[cb + i];
      gram[a * n + b] = s0 + s1;
    }
  }
  if (vector && gradient) {
    // g = J^T v from the column-major copy: contiguous dot products.
    for (let a = 0; a < n; a++) {
      const ca = a * m;
      let s0 = 0;
      let s1 = 0;
      let i = 0;
      for (; i + 1 < m; i += 2) {
        s0 += t[ca + i] * vector[i];
        s1 += t[ca + i + 1] * vector[i + 1];
      }
      if (i < m) s0 += t[ca + i] * vector[i];
      gradient[a] = s0 + s1;
    }
  }
  // Mirror the upper triangle (blocks on the diagonal computed both halves already).
  for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) gram[b * n + a] = gram[a * n + b];
}

/**
 * g = J^T r.
 *
 * @param jac row-major m x n; r length m; out length n, overwritten.
 */
export function transposeTimesVector(jac: Float64Array, m: number, n: number, r: Float64Array, out: Float64Array): void {
  out.fill(0, 0, n);
  for (let i = 0; i < m; i++) {
    const ri = r[i];
    if (ri === 0) continue;
    const row = i * n;
    for (let a = 0; a < n; a++) out[a] += jac[row + a] * ri;
  }
}

/** Euclidean norm of the first `n` entries, scaled to avoid overflow and underflow. */
export function euclideanNorm(x: ArrayLike<number>, n: number = x.length): number {
  let scale = 0;
  for (let i = 0; i < n; i++) {
    const v = Math.abs(x[i]);
    if (v > scale) scale = v;
  }
  if (scale === 0 || !Number.isFinite(scale)) return scale;
  let sum = 0;
  for (let i = 0; i < n; i++) {
    const v = x[i] / scale;
    sum += v * v;
  }
  return scale * Math.sqrt(sum);
}

/** Sum of squares of the first `n` entries (no scaling: callers check for overflow). */
export function sumOfSquares(x: ArrayLike<number>, n: number = x.length): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i] * x[i];
  return s;
}

/**
 * In-place Cholesky factorisation A = L L^T of a symmetric n x n matrix (lower triangle used).
 * On success the lower triangle of `a` holds L and the function returns true; when a pivot is
 * not positive (or not above `relativePivotFloor` times the original diagonal entry) it returns
 * false and `a` is left partly overwritten.
 */
export function choleskyInPlace(a: Float64Array, n: number, relativePivotFloor = 0): boolean {
  for (let j = 0; j < n; j++) {
    const rj = j * n;
    let d = a[rj + j];
    const original = d;
    for (let k = 0; k < j; k++) d -= a[rj + k] * a[rj + k];
    if (!(d > relativePivotFloor * original) || !(d > 0)) return false;
    const ljj = Math.sqrt(d);
    a[rj + j] = ljj;
    const inv = 1 / ljj;
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let s = a[ri + j];
      for (let k = 0; k < j; k++) s -= a[ri + k] * a[rj + k];
      a[ri + j] = s * inv;
    }
  }
  return true;
}

/** Solve L y = b in place (b becomes y), L lower triangular from {@link choleskyInPlace}. */
export function forwardSubstitute(l: Float64Array, n: number, b: Float64Array): void {
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[ri + k] * b[k];
    b[i] = s / l[ri + i];
  }
}

/** Solve L^T x = y in place (y becomes x). */
export function backSubstituteTransposed(l: Float64Array, n: number, y: Float64Array): void {
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= l[k * n + i] * y[k];
    y[i] = s / l[i * n + i];
  }
}

/**
 * Inverse of a symmetric positive-definite matrix, or null when it is numerically singular.
 *
 * The matrix is first scaled to unit diagonal (A = D S D, D = sqrt(diag A)) so the test is on
 * the conditioning of the correlation-like matrix S: it is declared singular when a Cholesky
 * pivot of S falls below `pivotFloor` (default 1e-13, i.e. a reciprocal condition number
 * of about 1e-13). Entries of A that are zero on the diagonal make it singular.
 *
 * @param a symmetric n x n (row-major), not modified.
 * @returns a new n x n Float64Array, or null.
 */
export function inverseSymmetricPositiveDefinite(a: Float64Array, n: number, pivotFloor = 1e-13): Float64Array | null {
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = a[i * n + i];
    if (!(v > 0) || !Number.isFinite(v)) return null;
    d[i] = Math.sqrt(v);
  }
  const l = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) l[i * n + j] = a[i * n + j] / (d[i] * d[j]);
  if (!choleskyInPlace(l, n, pivotFloor)) return null;
  // W = L^-1 (lower triangular, column by column), then S^-1 = W^T W: n^3/3 multiply-adds.
  const w = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    w[j * n + j] = 1 / l[j * n + j];
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let s = 0;
      for (let k = j; k < i; k++) s -= l[ri + k] * w[k * n + j];
      w[ri + j] = s / l[ri + i];
    }
  }
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = i; k < n; k++) s += w[k * n + i] * w[k * n + j];
      const v = s / (d[i] * d[j]);
      inv[i * n + j] = v;
      inv[j * n + i] = v;
    }
  }
  return inv;
}

/** x^T A x for symmetric n x n A. */
export function quadraticForm(a: Float64Array, n: number, x: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    let t = 0;
    for (let j = 0; j < n; j++) t += a[ri + j] * x[j];
    s += x[i] * t;
  }
  return s;
}
