/**
 * The fast pre-screen: one candidate's chi(k) simulated with every shell at its structure
 * distance and degeneracy and sigma^2 from a phonon model (correlated Debye or Einstein,
 * Sevillano, Meuth and Rehr, Phys. Rev. B 20, 4908 (1979)) plus the shell's static spread^2;
 * only e0 and s0sq (and, for a two-candidate mixture, the fraction) are adjusted.
 *
 * Speed comes from two exact reorganisations of the EXAFS equation:
 * - With e0 the only non-linear parameter, chi(k; e0) = chi_0(q), q = sqrt(k^2 - 0.2624683 e0),
 *   where chi_0 is the model at e0 = 0. chi_0 is evaluated once per candidate on a fine uniform
 *   q grid (step 0.01 1/Å) and interpolated (cubic Hermite) for each trial e0, so a trial costs
 *   one interpolation and one transform instead of a sum over all shells.
 * - s0sq (and the mixture weights) enter linearly: for a given e0 they follow from linear least
 *   squares on the projected model columns P_c (normal equations; bounds by checking the
 *   boundary solutions, the active-set idea of Lawson and Hanson, Solving Least Squares Problems
 *   (1974), ch. 23). The remaining one-dimensional problem in e0 is solved by a coarse scan
 *   followed by golden-section search (Kiefer, Proc. Am. Math. Soc. 4, 502 (1953)).
 * Errors come from the Jacobian at the optimum (s0sq and fraction analytic, e0 by central
 * differences) and ../fit/statistics, exactly as for a refinement.
 */
import { K2_PER_EV } from '../core/constants';
import { evaluateModel } from '../model/exafs';
import { cubicUniform } from '../numeric/interpolate';
import type { ScatteringPath } from '../paths/pathset';
import type { ScatteringTable } from '../scatter/provider';
import { fitStatistics } from '../fit/statistics';
import { propagateNoise } from '../fit/noise-propagation';
import { inverseSymmetricPositiveDefinite } from '../fit/dense';
import type { FitStats, ValueWithError } from '../fit/exafs/refine';
import { projectChi, type DataWindow } from './window';

/** One component of a pre-screened candidate (a mixture has two). */
export interface PrescreenComponent {
  paths: readonly ScatteringPath[];
  tables: readonly ScatteringTable[];
  /** sigma^2 of each path, Å^2. */
  msrd: ArrayLike<number>;
}

export interface PrescreenOptions {
  /** 'free' (within s0sqBounds) or a fixed S0^2. */
  s0sq: number | 'free';
  s0sqBounds: [number, number];
  /** Range searched for the E0 shift, eV. */
  e0Range: [number, number];
  /** Step of the coarse e0 scan, eV (default 2). */
  e0Step?: number;
}

export interface PrescreenResult {
  converged: boolean;
  message: string;
  s0sq: ValueWithError;
  e0: ValueWithError;
  /** Share of the first component (mixtures only). */
  fraction?: ValueWithError;
  stats: FitStats;
  warnings: string[];
  /** Number of trial e0 values evaluated. */
  evaluations: number;
}

const Q_STEP = 0.01;
const GOLDEN = (Math.sqrt(5) - 1) / 2;

interface LinearSolution { coefficients: number[]; ssr: number }

/** Model curves of the components, ready for trial e0 values. */
interface Curves { q0: Float64Array[]; modelK: Float64Array; nResiduals: number }

function prepareCurves(window: DataWindow, components: readonly PrescreenComponent[], e0Low: number): Curves {
  const modelK = window.dataset.modelK;
  const kEnd = modelK[modelK.length - 1];
  const qMax = Math.sqrt(kEnd * kEnd + K2_PER_EV * Math.max(0, -e0Low)) + 4 * Q_STEP;
  const nq = Math.ceil(qMax / Q_STEP) + 1;
  const qGrid = new Float64Array(nq);
  for (let i = 0; i < nq; i++) qGrid[i] = i * Q_STEP;
  const q0 = components.map((c) => evaluateModel(qGrid, c.tables, {
    s0sq: 1,
    e0: 0,
    paths: c.paths.map((p, j) => ({ n: p.degeneracy, r: p.r, msrd: c.msrd[j], c3: 0, c4: 0 })),
  }).chi);
  return { q0, modelK, nResiduals: window.nResiduals };
}

/** The projected columns P_c of every component at one e0. */
function columnsAt(window: DataWindow, curves: Curves, e0: number, columns: Float64Array[], scratch: Float64Array, value: Float64Array): void {
  const k = curves.modelK;
  curves.q0.forEach((q0, c) => {
    for (let i = 0; i < k.length; i++) {
      const q2 = k[i] * k[i] - K2_PER_EV * e0;
      if (k[i] < 1e-9 || q2 <= 0) { scratch[i] = 0; continue; }
      cubicUniform(q0, 0, Q_STEP, Math.sqrt(q2), value);
      scratch[i] = value[0];
    }
    projectChi(window, scratch, columns[c]);
  });
}

function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

/**
 * Best linear coefficients (one per component) for fixed columns, with the constraints:
 * coefficients >= 0, their sum (= s0sq) fixed or inside the bounds.
 */
function solveLinear(columns: Float64Array[], data: Float64Array, dd: number, options: PrescreenOptions): LinearSolution {
  const [lo, hi] = options.s0sqBounds;
  if (columns.length === 1) {
    const pp = dot(columns[0], columns[0]);
    const pd = dot(columns[0], data);
    let a = options.s0sq === 'free' ? (pp > 0 ? pd / pp : lo) : options.s0sq;
    if (options.s0sq === 'free') a = Math.min(hi, Math.max(lo, a));
    return { coefficients: [a], ssr: Math.max(0, a * a * pp - 2 * a * pd + dd) };
  }
  const [pa, pb] = columns;
  const aa = dot(pa, pa), bb = dot(pb, pb), ab = dot(pa, pb), ad = dot(pa, data), bd = dot(pb, data);
  const ssr = (a: number, b: number) => Math.max(0, a * a * aa + b * b * bb + 2 * a * b * ab - 2 * a * ad - 2 * b * bd + dd);
  const trials: [number, number][] = [];
  const sumFixed = (total: number) => {
    // a = total f, b = total (1 - f): minimise over f in [0, 1]
    const da = aa - 2 * ab + bb;
    const num = total * (ab - bb) - ad + bd;
    const f = da > 0 ? Math.min(1, Math.max(0, -num / da / total)) : 0.5;
    trials.push([total * f, total * (1 - f)]);
  };
  if (options.s0sq === 'free') {
    const det = aa * bb - ab * ab;
    if (det > 1e-300) {
      const a = (ad * bb - bd * ab) / det;
      const b = (bd * aa - ad * ab) / det;
      if (a >= 0 && b >= 0 && a + b >= lo && a + b <= hi) trials.push([a, b]);
    }
    if (aa > 0) trials.push([Math.min(hi, Math.max(lo, ad / aa)), 0]);
    if (bb > 0) trials.push([0, Math.min(hi, Math.max(lo, bd / bb))]);
    sumFixed(lo);
    sumFixed(hi);
  } else {
    sumFixed(options.s0sq);
  }
  let best: LinearSolution = { coefficients: trials[0], ssr: ssr(...trials[0]) };
  for (const t of trials.slice(1)) {
    const s = ssr(t[0], t[1]);
    if (s < best.ssr) best = { coefficients: t, ssr: s };
  }
  return best;
}

/**
 * Pre-screen one candidate (one component) or mixture (two) against a compiled data window.
 * Never throws for a poor fit: a fit that cannot be made is reported with converged = false.
 */
export function prescreen(window: DataWindow, components: readonly PrescreenComponent[], options: PrescreenOptions): PrescreenResult {
  const [e0Low, e0High] = options.e0Range;
  const curves = prepareCurves(window, components, e0Low);
  const m = window.nResiduals;
  const data = window.data;
  const dd = dot(data, data);
  const columns = components.map(() => new Float64Array(m));
  const scratch = new Float64Array(curves.modelK.length);
  const value = new Float64Array(2);
  let evaluations = 0;
  const objective = (e0: number): LinearSolution => {
    evaluations++;
    columnsAt(window, curves, e0, columns, scratch, value);
    return solveLinear(columns, data, dd, options);
  };
  // coarse scan, then golden section inside the bracket around the best scan point
  const step = options.e0Step ?? 2;
  const scan: number[] = [];
  for (let e = e0Low; e <= e0High + 1e-9; e += step) scan.push(e);
  let bestIndex = 0;
  let bestSsr = Infinity;
  scan.forEach((e, i) => {
    const s = objective(e).ssr;
    if (s < bestSsr) { bestSsr = s; bestIndex = i; }
  });
  let a = scan[Math.max(0, bestIndex - 1)];
  let b = scan[Math.min(scan.length - 1, bestIndex + 1)];
  let x1 = b - GOLDEN * (b - a);
  let x2 = a + GOLDEN * (b - a);
  let f1 = objective(x1).ssr;
  let f2 = objective(x2).ssr;
  while (b - a > 2e-3) {
    if (f1 <= f2) { b = x2; x2 = x1; f2 = f1; x1 = b - GOLDEN * (b - a); f1 = objective(x1).ssr; }
    else { a = x1; x1 = x2; f1 = f2; x2 = a + GOLDEN * (b - a); f2 = objective(x2).ssr; }
  }
  let e0 = 0.5 * (a + b);
  let solution = objective(e0);
  if (bestSsr < solution.ssr) { e0 = scan[bestIndex]; solution = objective(e0); }

  // residuals and Jacobian at the optimum, in the parameters (s0sq, e0, fraction)
  columnsAt(window, curves, e0, columns, scratch, value);
  const coefficients = solution.coefficients;
  const s0sq = coefficients.reduce((s, c) => s + c, 0);
  const fraction = components.length === 2 ? (s0sq > 0 ? coefficients[0] / s0sq : 0.5) : 1;
  const residuals = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    let v = -data[i];
    columns.forEach((col, c) => { v += coefficients[c] * col[i]; });
    residuals[i] = v;
  }
  const h = 0.05;
  const plus = components.map(() => new Float64Array(m));
  const minus = components.map(() => new Float64Array(m));
  columnsAt(window, curves, e0 + h, plus, scratch, value);
  columnsAt(window, curves, e0 - h, minus, scratch, value);
  const names: string[] = [];
  const jacobianColumns: Float64Array[] = [];
  const atBound: ('lower' | 'upper' | null)[] = [];
  const [lo, hi] = options.s0sqBounds;
  if (options.s0sq === 'free') {
    const col = new Float64Array(m);
    for (let i = 0; i < m; i++) col[i] = components.length === 2 ? fraction * columns[0][i] + (1 - fraction) * columns[1][i] : columns[0][i];
    names.push('s0sq');
    jacobianColumns.push(col);
    atBound.push(s0sq <= lo + 1e-9 ? 'lower' : s0sq >= hi - 1e-9 ? 'upper' : null);
  }
  const de0 = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    let v = 0;
    for (let c = 0; c < components.length; c++) v += coefficients[c] * (plus[c][i] - minus[c][i]);
    de0[i] = v / (2 * h);
  }
  names.push('e0');
  jacobianColumns.push(de0);
  atBound.push(e0 <= e0Low + 1e-6 ? 'lower' : e0 >= e0High - 1e-6 ? 'upper' : null);
  if (components.length === 2) {
    const col = new Float64Array(m);
    for (let i = 0; i < m; i++) col[i] = s0sq * (columns[0][i] - columns[1][i]);
    names.push('fraction');
    jacobianColumns.push(col);
    atBound.push(fraction <= 1e-9 ? 'lower' : fraction >= 1 - 1e-9 ? 'upper' : null);
  }
  const nu = names.length;
  const jtj = new Float64Array(nu * nu);
  for (let p = 0; p < nu; p++) for (let q = 0; q < nu; q++) jtj[p * nu + q] = dot(jacobianColumns[p], jacobianColumns[q]);
  let covariance: Float64Array | null = null;
  try {
    covariance = inverseSymmetricPositiveDefinite(jtj, nu);
  } catch {
    covariance = null;
  }
  let propagated = null;
  if (covariance) {
    const jacobian = new Float64Array(m * nu);
    for (let p = 0; p < nu; p++) for (let i = 0; i < m; i++) jacobian[i * nu + p] = jacobianColumns[p][i];
    propagated = propagateNoise(jacobian, m, nu, covariance, dot(residuals, residuals), window.noiseBlocks());
  }
  const stats = fitStatistics({ residuals, data, noise: 1, nIndependent: window.nIndependent, covariance, names, atBound, errorCovariance: propagated?.covariance ?? null });
  const errorOf = (name: string): number => {
    const i = names.indexOf(name);
    return i >= 0 ? stats.standardErrors[i] : 0;
  };
  const warnings = stats.warnings.map((w) => w.message);
  const converged = Number.isFinite(solution.ssr) && Number.isFinite(e0);
  return {
    converged,
    message: converged ? 'e0 found by scan and golden section; s0sq by linear least squares' : 'the pre-screen objective is not finite',
    s0sq: { value: s0sq, error: errorOf('s0sq') },
    e0: { value: e0, error: errorOf('e0') },
    fraction: components.length === 2 ? { value: fraction, error: errorOf('fraction') } : undefined,
    stats: {
      rFactor: stats.rFactor, chiSquare: stats.chiSquare, reducedChiSquare: stats.reducedChiSquare, nIndependent: stats.nIndependent,
      nVaried: stats.nVaried, nPoints: stats.nPoints, degreesOfFreedom: stats.degreesOfFreedom, aic: stats.aic, bic: stats.bic,
    },
    warnings,
    evaluations,
  };
}
