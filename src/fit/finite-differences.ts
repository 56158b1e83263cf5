/**
 * Finite-difference Jacobian of a residual function, for problems that give no analytic one.
 *
 * Forward differences: J_ij = (f_i(x + h_j e_j) - f_i(x)) / h_j with h_j = sqrt(eps) max(1, |x_j|);
 * central differences: J_ij = (f_i(x + h_j e_j) - f_i(x - h_j e_j)) / (2 h_j) with
 * h_j = eps^(1/3) max(1, |x_j|). These step sizes balance truncation and rounding error
 * (Dennis and Schnabel, Numerical Methods for Unconstrained Optimization and Nonlinear
 * Equations (1983), section 5.4). The step actually taken is (x + h) - x, so that it is exactly
 * representable. Near a bound the step is reversed (forward) or replaced by a one-sided
 * difference (central), so the residuals are never evaluated outside the bounds.
 */

/** Difference scheme when no analytic Jacobian is given. */
export type DifferenceScheme = 'forward' | 'central';

/** Scratch buffers for {@link finiteDifferenceJacobian}; reuse them across calls. */
export interface FiniteDifferenceWork {
  /** Length n. */
  shifted: Float64Array;
  /** Length m. */
  plus: Float64Array;
  /** Length m. */
  minus: Float64Array;
}

/** Allocate scratch buffers for m residuals and n parameters. */
export function finiteDifferenceWork(m: number, n: number): FiniteDifferenceWork {
  return { shifted: new Float64Array(n), plus: new Float64Array(m), minus: new Float64Array(m) };
}

/**
 * Fill `out` (row-major m x n) with a finite-difference Jacobian at x.
 *
 * @param residuals the problem's residual function.
 * @param x point (length n), not modified.
 * @param f0 residuals at x (length m), used by forward differences.
 * @param lower,upper bounds (length n, +-Infinity where absent).
 * @param relativeStep overrides the default relative step of the scheme.
 * @returns the number of residual evaluations used (n for forward, up to 2n for central).
 */
export function finiteDifferenceJacobian(
  residuals: (params: Float64Array, out: Float64Array) => void,
  x: Float64Array,
  f0: Float64Array,
  m: number,
  n: number,
  out: Float64Array,
  scheme: DifferenceScheme,
  lower: Float64Array,
  upper: Float64Array,
  work: FiniteDifferenceWork,
  relativeStep?: number,
): number {
  const rel = relativeStep ?? (scheme === 'forward' ? Math.sqrt(Number.EPSILON) : Math.cbrt(Number.EPSILON));
  const xs = work.shifted;
  xs.set(x);
  let evaluations = 0;
  for (let j = 0; j < n; j++) {
    const xj = x[j];
    const h0 = rel * Math.max(1, Math.abs(xj));
    if (scheme === 'forward' || xj - h0 < lower[j] || xj + h0 > upper[j]) {
      // One-sided: forward unless that leaves the upper bound.
      const sign = xj + h0 > upper[j] && xj - h0 >= lower[j] ? -1 : 1;
      xs[j] = xj + sign * h0;
      const h = xs[j] - xj;
      residuals(xs, work.plus);
      evaluations++;
      const twoStepsInside = xj + 2 * h >= lower[j] && xj + 2 * h <= upper[j];
      if (scheme === 'forward' || !twoStepsInside) {
        for (let i = 0; i < m; i++) out[i * n + j] = (work.plus[i] - f0[i]) / h;
      } else {
        // Second-order one-sided difference with points x, x+h, x+2h.
        xs[j] = xj + 2 * h;
        residuals(xs, work.minus);
        evaluations++;
        for (let i = 0; i < m; i++) out[i * n + j] = (-3 * f0[i] + 4 * work.plus[i] - work.minus[i]) / (2 * h);
      }
    } else {
      xs[j] = xj + h0;
      const hPlus = xs[j] - xj;
      residuals(xs, work.plus);
      xs[j] = xj - h0;
      const hMinus = xj - xs[j];
      residuals(xs, work.minus);
      evaluations += 2;
      const span = hPlus + hMinus;
      for (let i = 0; i < m; i++) out[i * n + j] = (work.plus[i] - work.minus[i]) / span;
    }
    xs[j] = xj;
  }
  return evaluations;
}
