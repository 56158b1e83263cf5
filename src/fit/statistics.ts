/**
 * Goodness-of-fit statistics for EXAFS fits and significance tests between fits.
 *
 * Formulas (N_pts fitted points, N_ind independent points, nu = number of varied parameters,
 * r_i the residuals that were minimised, eps_i their measurement noise, y_i the fitted data):
 * - Independent points (Stern, Phys. Rev. B 48, 9825 (1993)):
 *     N_ind = 2 Dk DR / pi + 2      (endCorrection true, the default: Stern's count)
 *     N_ind = 2 Dk DR / pi          (endCorrection false: the Nyquist count alone)
 * - chi-square with the points scaled to the information they carry (International XAFS Society
 *   Standards and Criteria Committee, "Error reporting recommendations" (2000), from memory;
 *   common practice):
 *     chi2 = (N_ind / N_pts) sum_i (r_i / eps_i)^2,   reduced chi2 = chi2 / (N_ind - nu)
 * - R-factor: R = sum_i r_i^2 / sum_i y_i^2 (the fractional misfit, squared form).
 * - Information criteria with N_ind as the sample size, Gaussian likelihood with unknown
 *   variance (Akaike, IEEE Trans. Autom. Control 19, 716 (1974); Schwarz, Ann. Stat. 6, 461 (1978)):
 *     AIC = N_ind ln(chi2 / N_ind) + 2 nu,   BIC = N_ind ln(chi2 / N_ind) + nu ln(N_ind)
 *   Only differences between fits of the same data are meaningful.
 * - Standard errors: sqrt(diag(C_chi)) * sqrt(reduced chi2), where C_chi = (J_chi^T J_chi)^-1 is the
 *   covariance of the chi2-normalised problem, J_chi = sqrt(N_ind/N_pts) J / eps. For uniform
 *   noise this is C (N_pts/N_ind) eps^2 with C = (J^T J)^-1 of the minimised residuals, and the
 *   scaled covariance becomes C * sum r^2 / (N_ind - nu), independent of eps. For per-point
 *   noise the effective eps^2 = N_pts / sum eps_i^-2 is used (exact when the residuals were
 *   already divided by their noise; pass noise 1 then).
 * - Correlation: C_ij / sqrt(C_ii C_jj).
 * - F-test between nested fits (restricted model with p0 parameters inside the full one with p1):
 *     F = ((chi2_0 - chi2_1) / (p1 - p0)) / (chi2_1 / (N_ind - p1)),  p = P(F(p1-p0, N_ind-p1) > F)
 * - Hamilton's R-ratio test (Hamilton, Acta Cryst. 18, 502 (1965)): with the square-root R-factors
 *   R = sqrt(R-factor), the ratio Rr = R_0 / R_1 is significant at level alpha when
 *   Rr > sqrt(b F_{b, n-m, alpha} / (n - m) + 1), b = p1 - p0 restrictions, m = p1, n = N_ind
 *   observations; equivalently p = P(F(b, n-m) > (Rr^2 - 1)(n - m)/b).
 */
import { InputError } from '../core/errors';
import { fDistributionSurvival } from './distributions';

/**
 * Number of independent points in a fit over k in [kMin, kMax] (1/Å) and R in [rMin, rMax] (Å).
 * @param endCorrection add Stern's +2 (default true).
 * @throws InputError when a range is empty or not finite.
 */
export function independentPoints(kMin: number, kMax: number, rMin: number, rMax: number, endCorrection = true): number {
  if (!(kMax > kMin) || !Number.isFinite(kMin) || !Number.isFinite(kMax)) {
    throw new InputError(`k range [${kMin}, ${kMax}] is empty or not finite`, { key: 'kRange' });
  }
  if (!(rMax > rMin) || !Number.isFinite(rMin) || !Number.isFinite(rMax)) {
    throw new InputError(`R range [${rMin}, ${rMax}] is empty or not finite`, { key: 'rRange' });
  }
  return (2 * (kMax - kMin) * (rMax - rMin)) / Math.PI + (endCorrection ? 2 : 0);
}

/** Why a fit result deserves a second look. */
export interface FitWarning {
  code: 'underdetermined' | 'at-bound' | 'high-correlation' | 'no-covariance';
  message: string;
  /** Names of the parameters concerned. */
  parameters: string[];
}

/** Inputs of {@link fitStatistics}. */
export interface FitStatisticsInput {
  /** Residuals that were minimised (model - data, weighted as in the fit), length N_pts. */
  residuals: Float64Array;
  /** The fitted data in the same space and weighting, length N_pts (for the R-factor). */
  data: Float64Array;
  /** Measurement noise eps: one value for all points, or one per point (same units as residuals). */
  noise: number | Float64Array;
  /** Independent points N_ind (see {@link independentPoints}). */
  nIndependent: number;
  /** (J^T J)^-1 of the minimised residuals (nu x nu, row-major), or null when singular. */
  covariance: Float64Array | null;
  /** Names of the varied parameters (length nu); their count is nu. */
  names: readonly string[];
  /** Per varied parameter: 'lower'/'upper' when it ended at a bound. */
  atBound?: readonly ('lower' | 'upper' | null)[];
  /** |correlation| above which a pair is reported (default 0.9). */
  correlationThreshold?: number;
  /**
   * A better-founded covariance of the varied parameters (nu x nu), e.g. the noise-propagated one
   * of ./noise-propagation.ts: when given, standard errors and correlations come from it instead
   * of the scaled (J^T J)^-1 of the module header.
   */
  errorCovariance?: Float64Array | null;
}

/** Statistics of one fit. Values are NaN where undefined (see `warnings`). */
export interface FitStatistics {
  nPoints: number;
  nIndependent: number;
  nVaried: number;
  /** N_ind - nu. */
  degreesOfFreedom: number;
  /** Sum of squared residuals (unscaled). */
  sumOfSquares: number;
  chiSquare: number;
  reducedChiSquare: number;
  rFactor: number;
  aic: number;
  bic: number;
  /** sqrt(diag(scaledCovariance)); NaN without covariance or degrees of freedom. */
  standardErrors: Float64Array;
  /** C_chi * reduced chi2 (nu x nu), or `errorCovariance` when given; null without covariance. */
  scaledCovariance: Float64Array | null;
  /** Correlation matrix (nu x nu), or null. */
  correlation: Float64Array | null;
  warnings: FitWarning[];
}

/**
 * Statistics of a finished fit (formulas in the module header).
 * @throws InputError on inconsistent lengths or non-positive noise.
 */
export function fitStatistics(input: FitStatisticsInput): FitStatistics {
  const { residuals, data, noise, nIndependent, covariance, names } = input;
  const nPoints = residuals.length;
  const nu = names.length;
  if (data.length !== nPoints) throw new InputError(`data has ${data.length} points, residuals ${nPoints}`, { key: 'data' });
  if (!(nIndependent > 0)) throw new InputError(`number of independent points must be > 0, got ${nIndependent}`, { key: 'nIndependent' });
  if (covariance && covariance.length !== nu * nu) {
    throw new InputError(`covariance has ${covariance.length} entries, expected ${nu} x ${nu}`, { key: 'covariance' });
  }
  let weightedSum = 0;
  let inverseVarianceSum = 0;
  if (typeof noise === 'number') {
    if (!(noise > 0) || !Number.isFinite(noise)) throw new InputError(`noise must be a finite number > 0, got ${noise}`, { key: 'noise' });
  } else if (noise.length !== nPoints) {
    throw new InputError(`noise has ${noise.length} values, residuals ${nPoints}`, { key: 'noise' });
  }
  let ssr = 0;
  let dataSum = 0;
  for (let i = 0; i < nPoints; i++) {
    const eps = typeof noise === 'number' ? noise : noise[i];
    if (!(eps > 0) || !Number.isFinite(eps)) throw new InputError(`noise at point ${i} must be > 0, got ${eps}`, { key: 'noise' });
    const r = residuals[i];
    ssr += r * r;
    weightedSum += (r / eps) ** 2;
    inverseVarianceSum += 1 / (eps * eps);
    dataSum += data[i] * data[i];
  }
  const chiSquare = (nIndependent / nPoints) * weightedSum;
  const dof = nIndependent - nu;
  const reducedChiSquare = dof > 0 ? chiSquare / dof : NaN;
  const rFactor = dataSum > 0 ? ssr / dataSum : NaN;
  const logTerm = nIndependent * Math.log(chiSquare / nIndependent);
  const aic = logTerm + 2 * nu;
  const bic = logTerm + nu * Math.log(nIndependent);

  const warnings: FitWarning[] = [];
  if (nu > nIndependent) {
    warnings.push({
      code: 'underdetermined',
      message: `${nu} varied parameters exceed the ${nIndependent.toFixed(1)} independent points: the fit is underdetermined`,
      parameters: [...names],
    });
  } else if (dof <= 0) {
    warnings.push({
      code: 'underdetermined',
      message: `no degrees of freedom left (${nIndependent.toFixed(1)} independent points, ${nu} varied parameters)`,
      parameters: [...names],
    });
  }

  let scaledCovariance: Float64Array | null = null;
  let correlation: Float64Array | null = null;
  const standardErrors = new Float64Array(nu).fill(NaN);
  if (input.errorCovariance && input.errorCovariance.length !== nu * nu) {
    throw new InputError(`error covariance has ${input.errorCovariance.length} entries, expected ${nu} x ${nu}`, { key: 'errorCovariance' });
  }
  if (covariance) {
    const effectiveVariance = nPoints / inverseVarianceSum;
    const scale = (nPoints / nIndependent) * effectiveVariance * reducedChiSquare;
    const shape = input.errorCovariance ?? covariance;
    correlation = new Float64Array(nu * nu);
    for (let a = 0; a < nu; a++) {
      for (let b = 0; b < nu; b++) {
        const d = Math.sqrt(shape[a * nu + a] * shape[b * nu + b]);
        correlation[a * nu + b] = a === b ? 1 : d > 0 ? shape[a * nu + b] / d : NaN;
      }
    }
    if (input.errorCovariance) scaledCovariance = input.errorCovariance;
    else if (Number.isFinite(scale)) scaledCovariance = Float64Array.from(covariance, (c) => c * scale);
    if (scaledCovariance) {
      for (let a = 0; a < nu; a++) standardErrors[a] = Math.sqrt(Math.max(scaledCovariance[a * nu + a], 0));
    }
    const threshold = input.correlationThreshold ?? 0.9;
    for (let a = 0; a < nu; a++) {
      for (let b = a + 1; b < nu; b++) {
        const c = correlation[a * nu + b];
        if (Math.abs(c) > threshold) {
          warnings.push({
            code: 'high-correlation',
            message: `${names[a]} and ${names[b]} are correlated by ${c.toFixed(3)} (|c| > ${threshold})`,
            parameters: [names[a], names[b]],
          });
        }
      }
    }
  } else if (nu > 0) {
    warnings.push({
      code: 'no-covariance',
      message: 'J^T J is singular: some parameters are not determined by the data, no errors can be given',
      parameters: [...names],
    });
  }
  if (input.atBound) {
    input.atBound.forEach((flag, a) => {
      if (flag) {
        warnings.push({
          code: 'at-bound',
          message: `${names[a]} ended at its ${flag} bound: its error is not meaningful`,
          parameters: [names[a]],
        });
      }
    });
  }
  return {
    nPoints,
    nIndependent,
    nVaried: nu,
    degreesOfFreedom: dof,
    sumOfSquares: ssr,
    chiSquare,
    reducedChiSquare,
    rFactor,
    aic,
    bic,
    standardErrors,
    scaledCovariance,
    correlation,
    warnings,
  };
}

/** Result of a significance test between a restricted and a full model. */
export interface NestedModelTest {
  /** The F statistic. */
  f: number;
  /** Numerator and denominator degrees of freedom. */
  d1: number;
  d2: number;
  /** Probability of an F at least this large if the restricted model were true. */
  pValue: number;
}

function checkNested(pRestricted: number, pFull: number, nIndependent: number): void {
  if (!(pFull > pRestricted)) throw new InputError(`the full model must vary more parameters (${pFull}) than the restricted one (${pRestricted})`);
  if (!(nIndependent > pFull)) throw new InputError(`${nIndependent} independent points leave no degrees of freedom for ${pFull} parameters`);
}

/**
 * F-test between nested fits of the same data (formula in the module header).
 * @param chiSquareRestricted chi2 of the model with fewer varied parameters (pRestricted).
 * @param chiSquareFull chi2 of the model with more varied parameters (pFull).
 */
export function fTestNested(
  chiSquareRestricted: number,
  chiSquareFull: number,
  pRestricted: number,
  pFull: number,
  nIndependent: number,
): NestedModelTest {
  checkNested(pRestricted, pFull, nIndependent);
  const d1 = pFull - pRestricted;
  const d2 = nIndependent - pFull;
  const f = (chiSquareRestricted - chiSquareFull) / d1 / (chiSquareFull / d2);
  return { f, d1, d2, pValue: fDistributionSurvival(f, d1, d2) };
}

/** Hamilton's test result: the ratio and the equivalent F-test. */
export interface HamiltonTest extends NestedModelTest {
  /** R_0 / R_1 with square-root R-factors. */
  ratio: number;
}

/**
 * Hamilton's R-ratio test (Acta Cryst. 18, 502 (1965)) from the (squared-form) R-factors of the
 * restricted and the full fit.
 */
export function hamiltonTest(
  rFactorRestricted: number,
  rFactorFull: number,
  pRestricted: number,
  pFull: number,
  nIndependent: number,
): HamiltonTest {
  checkNested(pRestricted, pFull, nIndependent);
  const ratio = Math.sqrt(rFactorRestricted / rFactorFull);
  const d1 = pFull - pRestricted;
  const d2 = nIndependent - pFull;
  const f = ((ratio * ratio - 1) * d2) / d1;
  return { ratio, f, d1, d2, pValue: fDistributionSurvival(f, d1, d2) };
}

/**
 * Hamilton's critical ratio R_{b, n-m, alpha} = sqrt(b F_{b,n-m,alpha} / (n - m) + 1), with the
 * F quantile found by bisection on the survival function (to 1e-12 relative).
 */
export function hamiltonCriticalRatio(restrictions: number, degreesOfFreedom: number, alpha: number): number {
  if (!(alpha > 0 && alpha < 1)) throw new InputError(`significance level must lie in (0, 1), got ${alpha}`);
  const f = fQuantileUpper(alpha, restrictions, degreesOfFreedom);
  return Math.sqrt((restrictions * f) / degreesOfFreedom + 1);
}

/** f with P(F(d1, d2) > f) = alpha, by bracketing and bisection. */
export function fQuantileUpper(alpha: number, d1: number, d2: number): number {
  let lo = 0;
  let hi = 1;
  while (fDistributionSurvival(hi, d1, d2) > alpha) {
    hi *= 2;
    if (hi > 1e300) return Infinity;
  }
  for (let i = 0; i < 200 && hi - lo > 1e-12 * hi; i++) {
    const mid = 0.5 * (lo + hi);
    if (fDistributionSurvival(mid, d1, d2) > alpha) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}
