/**
 * Nonlinear least squares by the Levenberg-Marquardt method: minimise S(x) = sum_i f_i(x)^2.
 *
 * Method: Levenberg, Q. Appl. Math. 2, 164 (1944); Marquardt, J. SIAM 11, 431 (1963); in the
 * trust-region form with diagonal scaling of Moré, "The Levenberg-Marquardt algorithm:
 * implementation and theory", Lecture Notes in Mathematics 630, 105 (1978):
 *
 * - Each outer iteration evaluates the Jacobian J at the current point and the scaling
 *   D = diag(d_j), d_j = max over iterations of the column norms ||J_j|| (Moré's eq. 6.3).
 * - The step p solves min ||f + J p|| subject to ||D p|| <= Delta: p = -(J^T J + lambda D^T D)^-1 J^T f
 *   with lambda >= 0 found by Moré's safeguarded Newton iteration on
 *   phi(lambda) = ||D p(lambda)|| - Delta, stopping when |phi| <= 0.1 Delta (Moré, section 5).
 *   Here the linear systems are solved by Cholesky factorisation of the normal equations
 *   instead of Moré's QR factorisation of J (the normal-equations form of the same iteration,
 *   Nocedal and Wright, Numerical Optimization, 2nd ed. (2006), Alg. 4.3): it costs m n^2 / 2
 *   once per Jacobian and n^3 / 6 per trial lambda, which is what makes small fits fast. The
 *   price is the squared condition number of J; the scaling D removes the part that comes from
 *   parameter units, not the part from correlated parameters (the statistics module warns
 *   about those), and the lambda > 0 solves stay positive definite.
 * - The trust radius Delta follows the ratio rho = actual / predicted reduction (Moré, eq. 7.1
 *   and the update rules of section 7): shrink when rho <= 1/4, expand when rho >= 3/4 or
 *   lambda = 0; steps with rho < 1e-4 are rejected.
 * - Convergence tests (Moré, section 8): relative reduction of S both actual and predicted at most
 *   `ftol`; Delta <= xtol ||D x||; the cosine between f and every column of J at most `gtol`.
 *
 * Bounds are handled by the smooth transforms of ./bounds (the fit runs in unbounded internal
 * variables). Without an analytic Jacobian, finite differences (./finite-differences) are used.
 *
 * The covariance returned is (J^T J)^-1 for the external parameters, J evaluated at the
 * solution (the Jacobian and Gram matrix of the last iteration are reused when no step was
 * accepted after them, i.e. when they were taken there). It is not scaled by the residual
 * variance: ./statistics does that.
 * (Equation, section and algorithm numbers of the cited texts are from memory.)
 *
 * Work per iteration: one Jacobian, kept column-major (problems that can write it so give
 * `jacobianColumns`; a row-major `jacobian` is transposed once), J^T J and J^T f from those
 * columns (./dense), then n^3/6 per trial lambda. Buffers are allocated once per fit; the result
 * takes over the residual and row-major Jacobian buffers instead of copying them.
 *
 * Checked in test/fit-levenberg-marquardt.test.ts against scipy.optimize.least_squares
 * (method 'lm', MINPACK) and NIST StRD Misra1a; on benchmark B1 the iterates match MINPACK's
 * (same iteration and evaluation counts, final sums of squares equal to 1e-13).
 */
import { InputError } from '../core/errors';
import { makeBoundMap, toExternal, toInternal, atBound, type BoundMap } from './bounds';
import {
  backSubstituteTransposed,
  choleskyInPlace,
  euclideanNorm,
  forwardSubstitute,
  gramMatrixOfColumns,
  inverseSymmetricPositiveDefinite,
  quadraticForm,
  sumOfSquares,
  transposeInto,
} from './dense';
import { finiteDifferenceJacobian, finiteDifferenceWork, type DifferenceScheme } from './finite-differences';

/**
 * A least-squares problem given as plain functions of the external parameter vector.
 * Functions must not keep or modify `params`; they write into `out`.
 */
export interface LeastSquaresProblem {
  /** Residuals f(x): writes nResiduals values into `out`. */
  residuals(params: Float64Array, out: Float64Array): void;
  /**
   * Optional analytic Jacobian df_i/dx_j, written row-major (nResiduals x nParams) into `out`.
   * It is called right after `residuals` at the same point, so caching shared pieces is safe.
   */
  jacobian?(params: Float64Array, out: Float64Array): void;
  /**
   * Optional: the same analytic Jacobian written column-major into `out` (element (i, j) at
   * out[j * nResiduals + i], each parameter's column contiguous). Used instead of `jacobian` when
   * present (the fitter works on columns, so this saves it a transpose per evaluation); called
   * under the same contract. A wrapper that forwards only `jacobian` still gives correct fits.
   */
  jacobianColumns?(params: Float64Array, out: Float64Array): void;
  /** Number of residuals m (m >= number of parameters). */
  nResiduals: number;
  /** Start values (length n). */
  initial: ArrayLike<number>;
  /** Lower bounds (length n; -Infinity for none). */
  lower?: ArrayLike<number>;
  /** Upper bounds (length n; +Infinity for none). */
  upper?: ArrayLike<number>;
}

/** Options of {@link fitLeastSquares}; every field has a documented default. */
export interface LeastSquaresOptions {
  /** Relative reduction of the sum of squares below which the fit has converged (1e-10). */
  ftol?: number;
  /** Relative size of the trust region below which the fit has converged (1e-10). */
  xtol?: number;
  /** Largest cosine between residuals and Jacobian columns at convergence (1e-10). */
  gtol?: number;
  /** Most outer iterations (Jacobian evaluations used for steps) (200). */
  maxIterations?: number;
  /** Most residual evaluations at start and trial points, finite differences excluded (100 (n + 1)). */
  maxEvaluations?: number;
  /** Initial trust radius as a multiple of ||D x0|| (or absolute when x0 = 0) (100, Moré's factor). */
  initialStepBound?: number;
  /** Finite-difference scheme when the problem has no Jacobian ('forward'). */
  differences?: DifferenceScheme;
  /** Relative finite-difference step (default: sqrt(eps) forward, eps^(1/3) central). */
  differenceStep?: number;
  /**
   * Compute the covariance (J^T J)^-1 at the solution (true). Needs one more Jacobian unless the
   * last one of the iterations was taken at the solution (no step accepted after it).
   */
  covariance?: boolean;
}

/** How a fit ended. Never an exception: read `message` for the reason. */
export type FitStatus = 'converged' | 'max-iterations' | 'stalled' | 'failed';

/** Uniform result record of every least-squares solver of shellrank. */
export interface LeastSquaresResult {
  /** Best parameters found (external, within bounds), length n. */
  params: Float64Array;
  /** Sum of squared residuals S at `params`. */
  ssr: number;
  /** Cost = S / 2 (the convention of most least-squares libraries). */
  cost: number;
  /** Residuals at `params`, length m. */
  residuals: Float64Array;
  /**
   * Jacobian at `params` with respect to the external parameters, row-major m x n. Filled with
   * NaN when it was not evaluated: `options.covariance` false, or status 'failed'.
   */
  jacobian: Float64Array;
  nResiduals: number;
  nParams: number;
  /** Outer iterations (Jacobians used to compute steps). */
  iterations: number;
  /** Residual evaluations at the start and trial points (finite differences excluded). */
  evaluations: number;
  /**
   * Jacobian evaluations, including the one at the solution for the covariance (not needed, and
   * not counted, when the last Jacobian of the iterations was already taken there).
   */
  jacobianEvaluations: number;
  /** Residual evaluations spent on finite differences. */
  differenceEvaluations: number;
  status: FitStatus;
  /** One sentence saying why the fit stopped. */
  message: string;
  /** (J^T J)^-1, n x n row-major, external parameters; null when J^T J is singular. */
  covariance: Float64Array | null;
  /** Per parameter: 'lower' or 'upper' when it ended at (within 1e-6 of) a bound, else null. */
  atBound: ('lower' | 'upper' | null)[];
}

const DEFAULTS = {
  ftol: 1e-10,
  xtol: 1e-10,
  gtol: 1e-10,
  maxIterations: 200,
  initialStepBound: 100,
  differences: 'forward' as DifferenceScheme,
  covariance: true,
};

const EPS = Number.EPSILON;
const DWARF = 2.2250738585072014e-308;

function checkTolerance(name: string, value: number): void {
  if (!(value >= 0) || !Number.isFinite(value)) {
    throw new InputError(`${name} must be a finite number >= 0, got ${value}`, { key: name });
  }
}

/**
 * Fit by Levenberg-Marquardt with Moré's scaling and trust-region update.
 *
 * @throws InputError for inconsistent input (lengths, bounds, start values outside bounds,
 *   fewer residuals than parameters, bad options). Everything that happens during the fit
 *   (no convergence, non-finite residuals) is reported through `status` and `message`.
 * Exceptions thrown by the problem's own functions propagate unchanged.
 */
export function fitLeastSquares(problem: LeastSquaresProblem, options: LeastSquaresOptions = {}): LeastSquaresResult {
  const n = problem.initial.length;
  const m = problem.nResiduals;
  if (!Number.isInteger(m) || m < 1) throw new InputError(`nResiduals must be a positive integer, got ${m}`, { key: 'nResiduals' });
  if (m < n) throw new InputError(`${m} residuals cannot determine ${n} parameters`, { key: 'nResiduals' });
  const ftol = options.ftol ?? DEFAULTS.ftol;
  const xtol = options.xtol ?? DEFAULTS.xtol;
  const gtol = options.gtol ?? DEFAULTS.gtol;
  checkTolerance('ftol', ftol);
  checkTolerance('xtol', xtol);
  checkTolerance('gtol', gtol);
  const maxIterations = options.maxIterations ?? DEFAULTS.maxIterations;
  const maxEvaluations = options.maxEvaluations ?? 100 * (n + 1);
  if (!(maxIterations >= 1)) throw new InputError(`maxIterations must be >= 1, got ${maxIterations}`, { key: 'maxIterations' });
  if (!(maxEvaluations >= 1)) throw new InputError(`maxEvaluations must be >= 1, got ${maxEvaluations}`, { key: 'maxEvaluations' });
  const factor = options.initialStepBound ?? DEFAULTS.initialStepBound;
  if (!(factor > 0)) throw new InputError(`initialStepBound must be > 0, got ${factor}`, { key: 'initialStepBound' });
  const scheme = options.differences ?? DEFAULTS.differences;
  const wantCovariance = options.covariance ?? DEFAULTS.covariance;

  const bounds = makeBoundMap(n, problem.lower, problem.upper);
  const solver = new Solver(problem, bounds, m, n, scheme, options.differenceStep);
  return solver.run(ftol, xtol, gtol, maxIterations, maxEvaluations, factor, wantCovariance);
}

/** Working state of one fit; all buffers allocated once. */
class Solver {
  readonly u: Float64Array; // internal point
  readonly uTrial: Float64Array;
  xExt: Float64Array; // external point matching u
  xTrial: Float64Array; // external trial point
  f: Float64Array; // residuals at x
  fTrial: Float64Array;
  readonly jacExt: Float64Array; // column-major m x n, external
  readonly jacInt: Float64Array; // column-major m x n, internal (aliases jacExt when bounds are absent)
  /** Row-major m x n as written by `problem.jacobian` or finite differences; null when unused. */
  readonly jacRows: Float64Array | null;
  /** Whether jacExt holds the Jacobian at the current point xExt. */
  jacobianCurrent = false;
  readonly dxdu: Float64Array;
  readonly gram: Float64Array;
  readonly chol: Float64Array;
  readonly grad: Float64Array; // J^T f
  readonly diag: Float64Array; // Moré scaling D
  readonly step: Float64Array;
  readonly work: Float64Array;
  readonly fdWork;
  /** Gauss-Newton step of the current Jacobian: not yet tried, solved, or singular. */
  gaussNewton: 'unknown' | 'solved' | 'singular' = 'unknown';
  readonly gaussNewtonStep: Float64Array;
  gaussNewtonNorm = NaN;
  gaussNewtonFactor = NaN;
  evaluations = 0;
  jacobianEvaluations = 0;
  differenceEvaluations = 0;

  constructor(
    readonly problem: LeastSquaresProblem,
    readonly bounds: BoundMap,
    readonly m: number,
    readonly n: number,
    readonly scheme: DifferenceScheme,
    readonly differenceStep: number | undefined,
  ) {
    this.u = new Float64Array(n);
    this.uTrial = new Float64Array(n);
    this.xExt = new Float64Array(n);
    this.xTrial = new Float64Array(n);
    this.f = new Float64Array(m);
    this.fTrial = new Float64Array(m);
    this.jacExt = new Float64Array(m * n);
    this.jacInt = bounds.identity ? this.jacExt : new Float64Array(m * n);
    this.jacRows = problem.jacobianColumns ? null : new Float64Array(m * n);
    this.dxdu = new Float64Array(n).fill(1);
    this.gram = new Float64Array(n * n);
    this.chol = new Float64Array(n * n);
    this.grad = new Float64Array(n);
    this.diag = new Float64Array(n);
    this.step = new Float64Array(n);
    this.work = new Float64Array(n);
    this.gaussNewtonStep = new Float64Array(n);
    this.fdWork = problem.jacobian ? null : finiteDifferenceWork(m, n);
  }

  /** Evaluate residuals at external point x into out; returns S (NaN/Infinity if not finite). */
  evaluate(x: Float64Array, out: Float64Array): number {
    this.problem.residuals(x, out);
    this.evaluations++;
    return sumOfSquares(out, this.m);
  }

  /**
   * Jacobian at the current point (xExt, f): fills jacExt (and jacRows when the problem writes
   * rows). With `internal`, also jacInt = jacExt diag(dx/du).
   */
  evaluateJacobian(internal: boolean): void {
    const { m, n, problem } = this;
    this.jacobianEvaluations++;
    if (problem.jacobianColumns) {
      problem.jacobianColumns(this.xExt, this.jacExt);
    } else {
      const rows = this.jacRows!;
      if (problem.jacobian) {
        problem.jacobian(this.xExt, rows);
      } else {
        this.differenceEvaluations += finiteDifferenceJacobian(
          problem.residuals,
          this.xExt,
          this.f,
          m,
          n,
          rows,
          this.scheme,
          this.bounds.lower,
          this.bounds.upper,
          this.fdWork!,
          this.differenceStep,
        );
      }
      transposeInto(rows, m, n, this.jacExt);
    }
    this.jacobianCurrent = true;
    if (internal && !this.bounds.identity) {
      const d = this.dxdu;
      const je = this.jacExt;
      const ji = this.jacInt;
      for (let j = 0; j < n; j++) {
        const col = j * m;
        const dj = d[j];
        for (let i = 0; i < m; i++) ji[col + i] = je[col + i] * dj;
      }
    }
  }

  /**
   * Solve (G + lambda D^2) p = -g by Cholesky into `step`; the factor stays in `chol`.
   * Returns false when the matrix is not numerically positive definite.
   */
  solveDamped(lambda: number): boolean {
    const { n, gram, chol, diag, step } = this;
    for (let a = 0; a < n; a++) {
      const ra = a * n;
      for (let b = 0; b <= a; b++) chol[ra + b] = gram[ra + b];
      chol[ra + a] += lambda * diag[a] * diag[a];
    }
    if (!choleskyInPlace(chol, n, lambda === 0 ? 1e-14 : 0)) return false;
    for (let a = 0; a < n; a++) step[a] = -this.grad[a];
    forwardSubstitute(chol, n, step);
    backSubstituteTransposed(chol, n, step);
    for (let a = 0; a < n; a++) if (!Number.isFinite(step[a])) return false;
    return true;
  }

  /** ||D p|| of the current step. */
  scaledStepNorm(): number {
    const { n, diag, step, work } = this;
    for (let a = 0; a < n; a++) work[a] = diag[a] * step[a];
    return euclideanNorm(work, n);
  }

  /**
   * Newton correction factor ||L^-1 D (D p) / ||D p|| ||^2 for Moré's lambda iteration,
   * using the Cholesky factor currently in `chol`.
   */
  phiDerivativeFactor(dxnorm: number): number {
    const { n, diag, step, work } = this;
    for (let a = 0; a < n; a++) work[a] = (diag[a] * diag[a] * step[a]) / dxnorm;
    forwardSubstitute(this.chol, n, work);
    return sumOfSquares(work, n);
  }

  /**
   * Moré's lambda iteration (his section 5, "lmpar"), normal-equations form: find lambda >= 0
   * with ||D p|| within 10 % of delta (or lambda = 0 when the Gauss-Newton step is inside).
   * Leaves the step in `step` and returns lambda.
   */
  levenbergParameter(delta: number, lambdaStart: number, gradScaledNorm: number): number {
    let parl = 0;
    let dxnorm = NaN;
    let fp = NaN;
    // The Gauss-Newton step (lambda = 0) depends only on J and D: solved once per Jacobian.
    if (this.gaussNewton === 'unknown') {
      if (this.solveDamped(0)) {
        this.gaussNewton = 'solved';
        this.gaussNewtonStep.set(this.step);
        this.gaussNewtonNorm = this.scaledStepNorm();
        this.gaussNewtonFactor = this.phiDerivativeFactor(this.gaussNewtonNorm);
      } else {
        this.gaussNewton = 'singular';
      }
    }
    if (this.gaussNewton === 'solved') {
      dxnorm = this.gaussNewtonNorm;
      fp = dxnorm - delta;
      if (fp <= 0.1 * delta) {
        this.step.set(this.gaussNewtonStep);
        return 0;
      }
      parl = fp / (delta * this.gaussNewtonFactor);
      if (!Number.isFinite(parl) || parl < 0) parl = 0;
    }
    let paru = gradScaledNorm / delta;
    if (paru === 0) paru = DWARF / Math.min(delta, 0.1);
    let lambda = Math.min(Math.max(lambdaStart, parl), paru);
    if (lambda === 0) lambda = Number.isFinite(dxnorm) && dxnorm > 0 ? gradScaledNorm / dxnorm : 0;
    for (let iter = 1; ; iter++) {
      if (lambda === 0) lambda = Math.max(DWARF, 0.001 * paru);
      if (!this.solveDamped(lambda)) {
        // Only possible when the Gram matrix itself is not finite-positive: push lambda up.
        parl = lambda;
        lambda = Math.max(10 * lambda, 1e-300);
        if (iter >= 60) return lambda;
        continue;
      }
      dxnorm = this.scaledStepNorm();
      const previous = fp;
      fp = dxnorm - delta;
      if (Math.abs(fp) <= 0.1 * delta || (parl === 0 && fp <= previous && previous < 0) || iter >= 10) return lambda;
      const correction = fp / (delta * this.phiDerivativeFactor(dxnorm));
      if (fp > 0) parl = Math.max(parl, lambda);
      if (fp < 0) paru = Math.min(paru, lambda);
      lambda = Math.max(parl, lambda + correction);
    }
  }

  run(
    ftol: number,
    xtol: number,
    gtol: number,
    maxIterations: number,
    maxEvaluations: number,
    factor: number,
    wantCovariance: boolean,
  ): LeastSquaresResult {
    const { m, n, bounds, diag, step, u, uTrial } = this;
    toInternal(bounds, this.problem.initial, u);
    toExternal(bounds, u, this.xExt, this.dxdu);

    let ssr = this.evaluate(this.xExt, this.f);
    let iterations = 0;
    let status: FitStatus = 'failed';
    let message = '';
    let nonFiniteTrials = 0;

    if (!Number.isFinite(ssr)) {
      return this.finish(ssr, 0, 'failed', `residuals are not finite (${describeNonFinite(this.f, m)}) at the start values`, false);
    }
    if (n === 0) return this.finish(ssr, 0, 'converged', 'no free parameters: residuals evaluated once', wantCovariance);

    let fnorm = Math.sqrt(ssr);
    let lambda = 0;
    let delta = 0;
    let xnorm = 0;

    outer: for (;;) {
      if (iterations >= maxIterations) {
        status = 'max-iterations';
        message = `stopped after ${iterations} iterations (maxIterations) before the convergence tests were met`;
        break;
      }
      this.evaluateJacobian(true);
      iterations++;
      gramMatrixOfColumns(this.jacInt, m, n, this.gram, this.f, this.grad);
      for (let j = 0; j < n; j++) {
        if (!Number.isFinite(this.gram[j * n + j]) || !Number.isFinite(this.grad[j])) {
          status = 'failed';
          message = `Jacobian column ${j} is not finite at iteration ${iterations}`;
          break outer;
        }
      }

      this.gaussNewton = 'unknown';
      // Moré's scaling: running maximum of the column norms.
      for (let j = 0; j < n; j++) {
        const norm = Math.sqrt(this.gram[j * n + j]);
        if (iterations === 1) diag[j] = norm === 0 ? 1 : norm;
        else if (norm > diag[j]) diag[j] = norm;
      }
      if (iterations === 1) {
        for (let j = 0; j < n; j++) this.work[j] = diag[j] * u[j];
        xnorm = euclideanNorm(this.work, n);
        delta = factor * xnorm;
        if (delta === 0) delta = factor;
      }

      // Cosine test: max_j |J_j . f| / (||J_j|| ||f||).
      let gnorm = 0;
      if (fnorm !== 0) {
        for (let j = 0; j < n; j++) {
          const colNorm = Math.sqrt(this.gram[j * n + j]);
          if (colNorm !== 0) gnorm = Math.max(gnorm, Math.abs(this.grad[j] / fnorm) / colNorm);
        }
      }
      if (gnorm <= gtol) {
        status = 'converged';
        message = fnorm === 0 ? 'residuals are exactly zero' : `gradient test met: residuals orthogonal to the Jacobian columns to ${gtol}`;
        break;
      }
      // ||D^-1 J^T f|| for the upper bound of lambda.
      for (let j = 0; j < n; j++) this.work[j] = this.grad[j] / diag[j];
      const gradScaledNorm = euclideanNorm(this.work, n);

      // Inner loop: trial steps until one is accepted.
      for (;;) {
        lambda = this.levenbergParameter(delta, lambda, gradScaledNorm);
        const pnorm = this.scaledStepNorm();
        if (iterations === 1) delta = Math.min(delta, pnorm);
        for (let j = 0; j < n; j++) uTrial[j] = u[j] + step[j];
        toExternal(bounds, uTrial, this.xTrial);
        const ssrTrial = this.evaluate(this.xTrial, this.fTrial);
        const finite = Number.isFinite(ssrTrial);
        const fnormTrial = finite ? Math.sqrt(ssrTrial) : Infinity;

        let actred = -1;
        if (finite && 0.1 * fnormTrial < fnorm) actred = 1 - (fnormTrial / fnorm) ** 2;
        const jpNormSq = Math.max(quadraticForm(this.gram, n, step), 0);
        const temp1sq = jpNormSq / ssr;
        const temp2sq = (lambda * pnorm * pnorm) / ssr;
        const prered = temp1sq + 2 * temp2sq;
        const dirder = -(temp1sq + temp2sq);
        const ratio = prered !== 0 ? actred / prered : 0;

        if (!finite) nonFiniteTrials++;
        if (ratio <= 0.25) {
          let temp = actred >= 0 ? 0.5 : (0.5 * dirder) / (dirder + 0.5 * actred);
          if (!finite || 0.1 * fnormTrial >= fnorm || temp < 0.1) temp = 0.1;
          delta = temp * Math.min(delta, pnorm / 0.1);
          lambda /= temp;
        } else if (lambda === 0 || ratio >= 0.75) {
          delta = pnorm / 0.5;
          lambda *= 0.5;
        }

        if (ratio >= 1e-4) {
          // Accept: swap trial buffers into place.
          u.set(uTrial);
          const x = this.xExt;
          this.xExt = this.xTrial;
          this.xTrial = x;
          const f = this.f;
          this.f = this.fTrial;
          this.fTrial = f;
          this.jacobianCurrent = false;
          if (!bounds.identity) toExternal(bounds, u, this.work, this.dxdu);
          ssr = ssrTrial;
          fnorm = fnormTrial;
          for (let j = 0; j < n; j++) this.work[j] = diag[j] * u[j];
          xnorm = euclideanNorm(this.work, n);
          nonFiniteTrials = 0;
        }

        if (Math.abs(actred) <= ftol && prered <= ftol && 0.5 * ratio <= 1) {
          status = 'converged';
          message = `sum of squares changed by less than ${ftol} (relative), actual and predicted`;
          break outer;
        }
        if (delta <= xtol * xnorm) {
          if (nonFiniteTrials > 0) {
            status = 'failed';
            message = `residuals are not finite at trial points next to the current parameters (${describeNonFinite(this.fTrial, m)}); the step size collapsed`;
          } else {
            status = 'converged';
            message = `step size fell below ${xtol} relative to the parameters`;
          }
          break outer;
        }
        if (this.evaluations >= maxEvaluations) {
          status = 'max-iterations';
          message = `stopped after ${this.evaluations} residual evaluations (maxEvaluations) before the convergence tests were met`;
          break outer;
        }
        if (Math.abs(actred) <= EPS && prered <= EPS && 0.5 * ratio <= 1) {
          status = 'stalled';
          message = 'no further reduction of the sum of squares is possible in double precision (ftol too small)';
          break outer;
        }
        if (delta <= EPS * xnorm) {
          status = nonFiniteTrials > 0 ? 'failed' : 'stalled';
          message =
            nonFiniteTrials > 0
              ? `residuals are not finite at trial points next to the current parameters (${describeNonFinite(this.fTrial, m)})`
              : 'no further improvement of the parameters is possible in double precision (xtol too small)';
          break outer;
        }
        if (gnorm <= EPS) {
          status = 'stalled';
          message = 'residuals are orthogonal to the Jacobian to machine precision (gtol too small)';
          break outer;
        }
        if (ratio >= 1e-4) break;
      }
    }
    return this.finish(ssr, iterations, status, message, wantCovariance && status !== 'failed');
  }

  /**
   * The result record. The solver is not used afterwards, so its buffers for the residuals and
   * the row-major Jacobian are handed to the result instead of copied.
   */
  finish(ssr: number, iterations: number, status: FitStatus, message: string, wantCovariance: boolean): LeastSquaresResult {
    const { m, n, bounds } = this;
    let covariance: Float64Array | null = null;
    let jacobian: Float64Array;
    if (wantCovariance && n > 0) {
      // Jacobian at the solution, external parameters (f is the residual vector there). The
      // Gram matrix of the iterations is reused when it is that of the external Jacobian there.
      const gramCurrent = this.jacobianCurrent && bounds.identity;
      if (!this.jacobianCurrent) this.evaluateJacobian(false);
      if (!gramCurrent) gramMatrixOfColumns(this.jacExt, m, n, this.gram);
      if (this.jacRows) {
        jacobian = this.jacRows;
      } else {
        jacobian = new Float64Array(m * n);
        transposeInto(this.jacExt, n, m, jacobian);
      }
      covariance = inverseSymmetricPositiveDefinite(this.gram, n);
      if (covariance && covariance.some((v) => !Number.isFinite(v))) covariance = null;
    } else if (n === 0) {
      jacobian = new Float64Array(0);
      covariance = new Float64Array(0);
    } else {
      jacobian = new Float64Array(m * n).fill(NaN);
    }
    const params = Float64Array.from(this.xExt);
    const flags: ('lower' | 'upper' | null)[] = [];
    for (let j = 0; j < n; j++) flags.push(atBound(bounds, j, params[j]));
    return {
      params,
      ssr,
      cost: ssr / 2,
      residuals: this.f,
      jacobian,
      nResiduals: m,
      nParams: n,
      iterations,
      evaluations: this.evaluations,
      jacobianEvaluations: this.jacobianEvaluations,
      differenceEvaluations: this.differenceEvaluations,
      status,
      message,
      covariance,
      atBound: flags,
    };
  }
}

/** "3 NaN, 1 Infinity; first at index 17" for messages. */
function describeNonFinite(values: Float64Array, m: number): string {
  let nan = 0;
  let inf = 0;
  let first = -1;
  for (let i = 0; i < m; i++) {
    const v = values[i];
    if (Number.isNaN(v)) nan++;
    else if (!Number.isFinite(v)) inf++;
    else continue;
    if (first < 0) first = i;
  }
  if (first < 0) return 'sum of squares overflows';
  const parts: string[] = [];
  if (nan) parts.push(`${nan} NaN`);
  if (inf) parts.push(`${inf} infinite`);
  return `${parts.join(', ')}; first at residual ${first}`;
}
