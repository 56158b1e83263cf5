/**
 * Dense linear least squares, min ||A x - b||_2, by Householder QR (Golub and Van Loan,
 * "Matrix Computations", 4th ed., section 5.3), and weighted polynomial fits built on it.
 * Sizes here are small (tens of columns, hundreds of rows), so a plain in-place QR on a
 * row-major copy is both the simplest and the fastest choice; it avoids the squared condition
 * number of the normal equations.
 */
import { ComputationError } from '../core/errors';

/**
 * Solve min ||A x - b|| for A with `rows` x `cols` entries stored row-major (rows >= cols).
 * Inputs are not modified. Returns x (length cols).
 * @throws ComputationError when A is rank-deficient (a zero pivot relative to the column norm).
 */
export function solveLeastSquares(a: Float64Array, b: Float64Array, rows: number, cols: number): Float64Array {
  if (a.length !== rows * cols) throw new RangeError(`solveLeastSquares: A has ${a.length} entries, expected ${rows} x ${cols}`);
  if (b.length !== rows) throw new RangeError(`solveLeastSquares: b has ${b.length} entries, expected ${rows}`);
  if (rows < cols) throw new RangeError(`solveLeastSquares: ${rows} rows cannot determine ${cols} unknowns`);
  const q = Float64Array.from(a);
  const y = Float64Array.from(b);
  const diag = new Float64Array(cols);
  let scale = 0;
  for (let i = 0; i < q.length; i++) scale = Math.max(scale, Math.abs(q[i]));
  for (let j = 0; j < cols; j++) {
    let norm = 0;
    for (let i = j; i < rows; i++) norm += q[i * cols + j] * q[i * cols + j];
    norm = Math.sqrt(norm);
    if (!(norm > 1e-13 * scale)) throw new ComputationError(`least-squares matrix is rank-deficient at column ${j + 1}`);
    const alpha = q[j * cols + j] > 0 ? -norm : norm;
    // Householder vector v = x - alpha e1, stored in place of column j below the diagonal
    q[j * cols + j] -= alpha;
    let vnorm2 = 0;
    for (let i = j; i < rows; i++) vnorm2 += q[i * cols + j] * q[i * cols + j];
    if (vnorm2 > 0) {
      for (let c = j + 1; c < cols; c++) {
        let dot = 0;
        for (let i = j; i < rows; i++) dot += q[i * cols + j] * q[i * cols + c];
        const f = (2 * dot) / vnorm2;
        for (let i = j; i < rows; i++) q[i * cols + c] -= f * q[i * cols + j];
      }
      let dot = 0;
      for (let i = j; i < rows; i++) dot += q[i * cols + j] * y[i];
      const f = (2 * dot) / vnorm2;
      for (let i = j; i < rows; i++) y[i] -= f * q[i * cols + j];
    }
    diag[j] = alpha;
  }
  const x = new Float64Array(cols);
  for (let j = cols - 1; j >= 0; j--) {
    let s = y[j];
    for (let c = j + 1; c < cols; c++) s -= q[j * cols + c] * x[c];
    x[j] = s / diag[j];
  }
  return x;
}

/** A polynomial p(E) = sum_m c_m ((E - center) / scale)^m, as fitted by {@link fitPolynomial}. */
export interface Polynomial {
  /** Coefficients c_0..c_order of the scaled variable. */
  coefficients: number[];
  center: number;
  scale: number;
}

/** Evaluate a {@link Polynomial} at x (Horner's rule). */
export function evaluatePolynomial(p: Polynomial, x: number): number {
  const t = (x - p.center) / p.scale;
  let v = 0;
  for (let m = p.coefficients.length - 1; m >= 0; m--) v = v * t + p.coefficients[m];
  return v;
}

/** Coefficients in the unscaled variable E: p(E) = sum_m a_m E^m (for reports). */
export function unscaledCoefficients(p: Polynomial): number[] {
  const order = p.coefficients.length - 1;
  const out = new Array<number>(order + 1).fill(0);
  // expand c_m ((E - c)/s)^m with the binomial theorem
  for (let m = 0; m <= order; m++) {
    const cm = p.coefficients[m] / Math.pow(p.scale, m);
    for (let j = 0; j <= m; j++) out[j] += cm * binomial(m, j) * Math.pow(-p.center, m - j);
  }
  return out;
}

function binomial(n: number, k: number): number {
  let r = 1;
  for (let i = 1; i <= k; i++) r = (r * (n - k + i)) / i;
  return r;
}

/**
 * Least-squares polynomial of `order` through the points of (x, y) with lo <= x <= hi.
 * Returns null when the range holds fewer than order + 1 points.
 */
export function fitPolynomial(x: Float64Array, y: Float64Array, lo: number, hi: number, order: number): { polynomial: Polynomial; points: number } | null {
  const idx: number[] = [];
  for (let i = 0; i < x.length; i++) if (x[i] >= lo && x[i] <= hi) idx.push(i);
  const cols = order + 1;
  if (idx.length < cols) return null;
  const center = (x[idx[0]] + x[idx[idx.length - 1]]) / 2;
  const scale = Math.max((x[idx[idx.length - 1]] - x[idx[0]]) / 2, 1e-12);
  const a = new Float64Array(idx.length * cols);
  const b = new Float64Array(idx.length);
  idx.forEach((i, r) => {
    const t = (x[i] - center) / scale;
    let p = 1;
    for (let m = 0; m < cols; m++) {
      a[r * cols + m] = p;
      p *= t;
    }
    b[r] = y[i];
  });
  const c = solveLeastSquares(a, b, idx.length, cols);
  return { polynomial: { coefficients: Array.from(c), center, scale }, points: idx.length };
}
