/**
 * The data window shared by every candidate of a ranking: the measured chi(k), the k and R
 * ranges, k-weights, windows and fit space, compiled once with the refinement's own problem
 * builder (../fit/exafs/problem.ts), so the pre-screen and the refinement see the same residual
 * layout, the same noise scaling and the same independent points.
 *
 * {@link projectChi} repeats the projection of a model chi(k) into that layout (k space: W k^w chi
 * / eps_k; R space: Re and Im of chi(R) inside the R range / (eps_R / sqrt 2); q space: the
 * R-filtered back-transform / eps_q), for the fast pre-screen that builds its model curve itself;
 * a test checks it against the problem's own residuals.
 */
import { buildExafsProblem, type CompiledDataset, type FitDomain } from '../fit/exafs/problem';
import type { NoiseBlock } from '../fit/noise-propagation';
import { backTransform, forwardTransform } from '../numeric/fourier';
import type { WindowShape } from '../numeric/window';

/** Where and how the data are compared with a model. */
export interface WindowSettings {
  /** k range of the fit, 1/Å. */
  kRange: [number, number];
  /** R range of the fit, Å. */
  rRange: [number, number];
  kWeightings: number[];
  fitIn: FitDomain;
  kTaper: { shape: WindowShape; taper: number };
  rTaper: { shape: WindowShape; taper: number };
}

/** Measured chi(k) as the ranking needs it. */
export interface MeasuredChi {
  /** Name for messages (the data file). */
  name: string;
  k: Float64Array;
  chi: Float64Array;
  /** Per-point noise of chi(k) (white-noise model), from the reduce stage. */
  noiseChi: number;
}

/** A compiled window: the data projected once, plus what a model projection needs. */
export interface DataWindow {
  settings: WindowSettings;
  measured: MeasuredChi;
  dataset: CompiledDataset;
  /** The data in the residual layout. */
  data: Float64Array;
  nResiduals: number;
  nIndependent: number;
  /** How the data noise reaches the residuals (computed on first use, then kept). */
  noiseBlocks(): NoiseBlock[];
}

/** Compile the window (validates the ranges against the data once). */
export function compileWindow(measured: MeasuredChi, settings: WindowSettings): DataWindow {
  const problem = buildExafsProblem(
    [{ name: 's0sq', value: 1, state: 'fixed' }, { name: 'e0', value: 0, state: 'fixed' }],
    [{
      name: measured.name, k: measured.k, chi: measured.chi, noiseChi: measured.noiseChi, paths: [], tables: [], rules: [],
      kRange: settings.kRange, kWeightings: settings.kWeightings, kTaper: settings.kTaper, rRange: settings.rRange, rTaper: settings.rTaper, fitIn: settings.fitIn,
    }],
  );
  return {
    settings, measured, dataset: problem.datasets[0], data: problem.data, nResiduals: problem.nResiduals, nIndependent: problem.nIndependent,
    noiseBlocks: problem.noiseBlocks,
  };
}

/**
 * Project a chi(k) on the window's model grid (`dataset.modelK`) into the residual layout,
 * writing `scale * projection(chi)` into out[0..nResiduals). Linear in chi.
 */
export function projectChi(window: DataWindow, chi: Float64Array, out: Float64Array, scale = 1): void {
  const d = window.dataset;
  const fitIn = d.spec.fitIn;
  let row = 0;
  for (const noise of d.noise) {
    const w = noise.kWeighting;
    if (fitIn === 'k') {
      for (const i of d.kInside) out[row++] = (scale * d.windowK[i] * Math.pow(d.modelK[i], w) * chi[i]) / noise.epsK;
      continue;
    }
    const spectrum = forwardTransform(d.modelK, chi, { kWeighting: w, window: d.kTaper });
    if (fitIn === 'R') {
      const sigma = noise.epsR / Math.SQRT2;
      for (const j of d.rInside) out[row++] = (scale * spectrum.re[j]) / sigma;
      for (const j of d.rInside) out[row++] = (scale * spectrum.im[j]) / sigma;
      continue;
    }
    const q = backTransform(spectrum, { window: d.rTaper });
    const dk = d.modelK[1] - d.modelK[0];
    for (const i of d.kInside) out[row++] = (scale * q.re[Math.round(d.modelK[i] / dk)]) / noise.epsQ;
  }
}
