/**
 * Background removal after Newville, Livins, Yacoby, Rehr and Stern, Phys. Rev. B 47, 14126
 * (1993): the smooth atomic absorption mu0 is a spline in k whose knots are too far apart to
 * carry Fourier components above a cutoff distance R_cut, and whose coefficients minimise the
 * part of the transform of chi = norm - mu0 below R_cut, where no real scattering shell can sit.
 *
 * Method used here (all linear, so one least-squares solve):
 * - mu0(k) = sum_j c_j B_j(k), uniform cubic B-splines on [kMin, kMax]. The knot spacing is at
 *   most pi / (2 R_cut): the Nyquist count of the paper, N = 2 R_cut (kMax - kMin) / pi + 1
 *   independent values, so the spline can follow every Fourier component up to R_cut and
 *   nothing much beyond (transform convention exp(2ikR), src/numeric/fourier.ts).
 * - Residual rows: the real and imaginary parts of
 *   chi(R_m) = (dk / sqrt(pi)) sum_i k_i^w W(k_i) (norm_i - mu0(k_i)) exp(2 i k_i R_m)
 *   for R_m = m dR <= R_cut, with dR the grid of a 2048-point FFT; these are linear in c.
 * - Optional end weights: rows pulling chi towards 0 at the first / last `endWeightPoints` grid points,
 *   with weight `endWeightLow` / `endWeightHigh` relative to the size of one transform row.
 * - A weak smoothing term, `regularisation` times the rows (norm_i - mu0(k_i)), keeps the
 *   coefficients that the windowed transform barely sees (near k = 0 where k^w vanishes)
 *   close to a plain least-squares spline through the data instead of undetermined.
 * - Optional standard (same paper): a theoretical chi_std(k) on the same grid; the
 *   transform rows then take norm - chi_std, so the low-R part of chi(R) is made to match that of
 *   the standard instead of zero. A short first shell (metal-oxygen ~1.9-2.0 Å) leaks through the
 *   window and the k-weight below R_cut; driven to zero, that leak is taken into mu0 and shifts
 *   the fitted shell. With the fitted model as standard the leak stays in chi.
 */
import { windowOnGrid, type WindowShape } from '../numeric/window';
import { basisAt, evaluateSpline, uniformCubicBasis, type UniformCubicBasis } from './bspline';
import { solveLeastSquares } from './least-squares';

export interface BackgroundSettings {
  /** Cutoff distance R_cut, Å; default 1.0. */
  cutoffR: number;
  /** k-weight of the transform that is minimised; default 2. */
  kWeighting: number;
  /** Start of the spline, 1/Å; default 0 (at E0). */
  kMin: number;
  /** End of the spline, 1/Å; null: the last grid point of the data. */
  kMax: number | null;
  /** Window of the minimised transform and its taper (1/Å); default hann, taper 1 (window 1/2 at kMin and kMax). */
  windowShape: WindowShape;
  windowTaper: number;
  /** End weights at the low and high end (0: off); defaults 0 and 1. */
  endWeightLow: number;
  endWeightHigh: number;
  /** Number of grid points each end weight covers; default 6. */
  endWeightPoints: number;
  /** Weight of the smoothing term relative to one transform row; default 0.05. */
  regularisation: number;
  /** Largest knot spacing, 1/Å; null: pi / (2 R_cut), the Nyquist spacing of the cutoff. */
  knotSpacing: number | null;
}

export const DEFAULT_BACKGROUND: BackgroundSettings = {
  cutoffR: 1.0,
  kWeighting: 2,
  kMin: 0,
  kMax: null,
  windowShape: 'hann',
  windowTaper: 1,
  endWeightLow: 0,
  endWeightHigh: 1,
  endWeightPoints: 6,
  regularisation: 0.05,
  knotSpacing: null,
};

/** FFT length whose R grid the minimised transform uses (as src/numeric/fourier.ts). */
export const BACKGROUND_NFFT = 2048;

export interface BackgroundFit {
  basis: UniformCubicBasis;
  coefficients: Float64Array;
  /** mu0 (normalised units) on the k grid. */
  background: Float64Array;
  /** chi = norm - mu0 on the k grid. */
  chi: Float64Array;
  /** Number of R points (each giving a real and an imaginary row) in the minimised transform. */
  rPoints: number;
  /** rms |chi(R)| over R <= R_cut of the normalised data itself (before) and of chi (after the fit). */
  lowRBefore: number;
  lowRAfter: number;
}

/**
 * Fit the background on a uniform k grid.
 * @param k uniform grid (1/Å), increasing, e.g. 0, 0.05, ... .
 * @param norm normalised mu on that grid.
 */
export function fitBackground(k: Float64Array, norm: Float64Array, settings: BackgroundSettings, standard: Float64Array | null = null): BackgroundFit {
  const n = k.length;
  const dk = k[1] - k[0];
  const kMin = Math.max(settings.kMin, k[0]);
  const kMax = Math.min(settings.kMax ?? k[n - 1], k[n - 1]);
  const maxSpacing = settings.knotSpacing ?? Math.PI / (2 * settings.cutoffR);
  const intervals = Math.max(1, Math.ceil((kMax - kMin) / maxSpacing - 1e-9));
  const basis = uniformCubicBasis(kMin, kMax, intervals);
  const nb = basis.count;
  const first = Math.max(0, Math.ceil((kMin - k[0]) / dk - 1e-9));
  let last = n - 1;
  while (last > first && k[last] > kMax + 1e-9) last--;
  const window = windowOnGrid({ shape: settings.windowShape, min: kMin, max: kMax, taper: settings.windowTaper }, k);
  const dR = Math.PI / (BACKGROUND_NFFT * dk);
  const rCount = Math.floor(settings.cutoffR / dR + 1e-9) + 1;
  const scale = dk / Math.sqrt(Math.PI);

  // rows: 2 per R point, then end weights, then smoothing rows
  const endWeightRows = (settings.endWeightLow > 0 ? settings.endWeightPoints : 0) + (settings.endWeightHigh > 0 ? settings.endWeightPoints : 0);
  const smoothRows = settings.regularisation > 0 ? last - first + 1 : 0;
  const rows = 2 * rCount + endWeightRows + smoothRows;
  const a = new Float64Array(rows * nb);
  const b = new Float64Array(rows);
  const v = new Float64Array(4);
  const firstBasis = new Int32Array(n);
  const values = new Float64Array(4 * n);
  for (let i = first; i <= last; i++) {
    firstBasis[i] = basisAt(basis, k[i], v);
    values.set(v, 4 * i);
  }
  let rowNormSum = 0;
  // weights k^w W(k) dk / sqrt(pi), computed once; exp(2 i k_i R_m) by rotation from k_first,
  // since k_i = k_first + (i - first) dk (uniform grid)
  const g = new Float64Array(n);
  for (let i = first; i <= last; i++) g[i] = scale * Math.pow(k[i], settings.kWeighting) * window[i];
  for (let m = 0; m < rCount; m++) {
    const twoR = 2 * m * dR;
    const re = 2 * m;
    const im = 2 * m + 1;
    const stepCos = Math.cos(twoR * dk);
    const stepSin = Math.sin(twoR * dk);
    let cr = Math.cos(twoR * k[first]);
    let sr = Math.sin(twoR * k[first]);
    const rowRe = re * nb;
    const rowIm = im * nb;
    for (let i = first; i <= last; i++) {
      const gi = g[i];
      if (gi !== 0) {
        const c = gi * cr;
        const s = gi * sr;
        const target = standard ? norm[i] - standard[i] : norm[i];
        b[re] += c * target;
        b[im] += s * target;
        const f = firstBasis[i];
        const v4 = 4 * i;
        for (let q = 0; q < 4; q++) {
          a[rowRe + f + q] += c * values[v4 + q];
          a[rowIm + f + q] += s * values[v4 + q];
        }
      }
      // rotate (cr, sr) by 2 R dk; re-anchor every 64 steps to keep rounding from building up
      if (((i - first + 1) & 63) === 0) {
        cr = Math.cos(twoR * k[i + 1 <= last ? i + 1 : i]);
        sr = Math.sin(twoR * k[i + 1 <= last ? i + 1 : i]);
      } else {
        const t = cr * stepCos - sr * stepSin;
        sr = sr * stepCos + cr * stepSin;
        cr = t;
      }
    }
  }
  for (let r = 0; r < 2 * rCount; r++) {
    let s = 0;
    for (let j = 0; j < nb; j++) s += a[r * nb + j] * a[r * nb + j];
    rowNormSum += Math.sqrt(s);
  }
  const typicalRow = rowNormSum / (2 * rCount);
  const lowRBefore = Math.sqrt(sumSquares(b, 0, 2 * rCount) / rCount);

  let row = 2 * rCount;
  const addPointRow = (i: number, weight: number) => {
    const f = firstBasis[i];
    for (let q = 0; q < 4; q++) a[row * nb + f + q] = weight * values[4 * i + q];
    b[row] = weight * norm[i];
    row++;
  };
  if (settings.endWeightLow > 0) for (let p = 0; p < settings.endWeightPoints; p++) addPointRow(first + p, settings.endWeightLow * typicalRow);
  if (settings.endWeightHigh > 0) for (let p = 0; p < settings.endWeightPoints; p++) addPointRow(last - p, settings.endWeightHigh * typicalRow);
  if (settings.regularisation > 0) {
    const w = (settings.regularisation * typicalRow) / Math.sqrt(last - first + 1);
    for (let i = first; i <= last; i++) addPointRow(i, w);
  }
  const coefficients = solveLeastSquares(a, b, rows, nb);
  const background = evaluateSpline(basis, coefficients, k);
  const chi = new Float64Array(n);
  for (let i = 0; i < n; i++) chi[i] = norm[i] - background[i];

  let after = 0;
  for (let m = 0; m < 2 * rCount; m++) {
    let s = b[m];
    for (let j = 0; j < nb; j++) s -= a[m * nb + j] * coefficients[j];
    after += s * s;
  }
  return { basis, coefficients, background, chi, rPoints: rCount, lowRBefore, lowRAfter: Math.sqrt(after / rCount) };
}

function sumSquares(a: Float64Array, from: number, to: number): number {
  let s = 0;
  for (let i = from; i < to; i++) s += a[i] * a[i];
  return s;
}
