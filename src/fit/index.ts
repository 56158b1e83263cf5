/**
 * The fitting machinery of shellrank, independent of any scattering model: Levenberg-Marquardt
 * least squares with bounds and multi-start, named free/fixed/tied parameters with checked
 * expressions, and goodness-of-fit statistics and significance tests. See each module's header
 * for its method and references.
 */
export { fitLeastSquares } from './levenberg-marquardt';
export type { LeastSquaresProblem, LeastSquaresOptions, LeastSquaresResult, FitStatus } from './levenberg-marquardt';
export { fitLeastSquaresMultiStart } from './multistart';
export type { MultiStartOptions, MultiStartResult } from './multistart';
export { defineParameters, parameterProblem } from './parameters';
export type { ParameterSpec, ParameterSet, ParameterState, ParameterEstimate, ParameterModel } from './parameters';
export { compileExpression, ALLOWED_FUNCTIONS, ALLOWED_CONSTANTS } from './expressions';
export type { CompiledExpression } from './expressions';
export {
  independentPoints,
  fitStatistics,
  fTestNested,
  hamiltonTest,
  hamiltonCriticalRatio,
  fQuantileUpper,
} from './statistics';
export type { FitStatistics, FitStatisticsInput, FitWarning, NestedModelTest, HamiltonTest } from './statistics';
export { logGamma, logBeta, regularizedIncompleteBeta, fDistributionCdf, fDistributionSurvival } from './distributions';
export { seededRandom } from './random';
export type { RandomStream } from './random';
export type { DifferenceScheme } from './finite-differences';
