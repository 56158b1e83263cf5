/**
 * Uniform cubic B-splines on [a, b] with `intervals` equal knot intervals: `intervals + 3` basis
 * functions B_j, each a piecewise cubic supported on four intervals, summing to 1 everywhere
 * (de Boor, "A Practical Guide to Splines", Springer 1978, ch. IX; the uniform cubic basis in the
 * closed form of its four segments).
 */

export interface UniformCubicBasis {
  a: number;
  b: number;
  intervals: number;
  /** Knot spacing (b - a) / intervals. */
  spacing: number;
  /** Number of basis functions, intervals + 3. */
  count: number;
}

export function uniformCubicBasis(a: number, b: number, intervals: number): UniformCubicBasis {
  if (!(b > a) || !(intervals >= 1) || !Number.isInteger(intervals)) throw new RangeError(`uniformCubicBasis: need a < b and a whole number of intervals >= 1`);
  return { a, b, intervals, spacing: (b - a) / intervals, count: intervals + 3 };
}

/**
 * The four non-zero basis values at x and the index of the first of them: B_first .. B_first+3.
 * x is clamped to [a, b]. Writes into `values` (length 4) and returns `first`.
 */
export function basisAt(basis: UniformCubicBasis, x: number, values: Float64Array): number {
  let u = (Math.min(Math.max(x, basis.a), basis.b) - basis.a) / basis.spacing;
  let cell = Math.floor(u);
  if (cell >= basis.intervals) cell = basis.intervals - 1;
  u -= cell;
  const v = 1 - u;
  values[0] = (v * v * v) / 6;
  values[1] = (3 * u * u * u - 6 * u * u + 4) / 6;
  values[2] = (-3 * u * u * u + 3 * u * u + 3 * u + 1) / 6;
  values[3] = (u * u * u) / 6;
  return cell;
}

/** Evaluate sum_j c_j B_j at each x. */
export function evaluateSpline(basis: UniformCubicBasis, coefficients: Float64Array, x: Float64Array): Float64Array {
  const out = new Float64Array(x.length);
  const v = new Float64Array(4);
  for (let i = 0; i < x.length; i++) {
    const first = basisAt(basis, x[i], v);
    out[i] = coefficients[first] * v[0] + coefficients[first + 1] * v[1] + coefficients[first + 2] * v[2] + coefficients[first + 3] * v[3];
  }
  return out;
}
