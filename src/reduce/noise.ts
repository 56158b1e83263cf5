/**
 * Noise estimate from the high-R part of the transform: at distances well beyond any
 * scattering shell (default 15-25 Å) |chi(R)| holds only noise, so its rms value eps_R measures
 * it (common practice, no source; docs/methods.md). For white noise of rms eps_k per point of chi(k)
 * on the grid dk, the transform of src/numeric/fourier.ts gives
 *   E |chi(R)|^2 = (dk^2 / pi) eps_k^2 sum_i (k_i^w W_i)^2,
 * hence eps_k = eps_R sqrt(pi) / (dk sqrt(sum_i (k_i^w W_i)^2)).
 */
import { forwardTransform, magnitude } from '../numeric/fourier';
import { windowOnGrid, type WindowShape } from '../numeric/window';
import { ComputationError } from '../core/errors';

export interface NoiseSettings {
  /** k-weight of the transform; default 2. */
  kWeighting: number;
  /** k range of the window, 1/Å; null end: the end of the data; default [2, null]. */
  kRange: [number, number | null];
  windowShape: WindowShape;
  /** Window taper, 1/Å; default 1. */
  windowTaper: number;
  /** R range whose |chi(R)| is noise, Å; default [15, 25]. */
  rRange: [number, number];
}

export const DEFAULT_NOISE: NoiseSettings = { kWeighting: 2, kRange: [2, null], windowShape: 'hann', windowTaper: 1, rRange: [15, 25] };

export interface NoiseEstimate {
  /** rms noise of chi(k) per grid point (dimensionless), assuming white noise. */
  k: number;
  /** rms |chi(R)| over rRange (Å^-(w+1)). */
  r: number;
  kWeighting: number;
  /** k range actually used, 1/Å. */
  kRange: [number, number];
  rRange: [number, number];
  windowShape: WindowShape;
  windowTaper: number;
}

/** Estimate the noise of chi(k) on a uniform grid from 0 (or any multiple of the step). */
export function estimateNoise(k: Float64Array, chi: Float64Array, settings: NoiseSettings): NoiseEstimate {
  const kEnd = settings.kRange[1] ?? k[k.length - 1];
  const window = { shape: settings.windowShape, min: settings.kRange[0], max: Math.min(kEnd, k[k.length - 1]), taper: settings.windowTaper };
  const dk = k[1] - k[0];
  // R reaches pi / (2 dk) whatever the FFT length (31 Å for dk = 0.05); the length only has to hold the grid
  const nfft = Math.max(2048, 1 << Math.ceil(Math.log2(Math.round(k[k.length - 1] / dk) + 2)));
  const spectrum = forwardTransform(k, chi, { kWeighting: settings.kWeighting, window, nfft });
  const mag = magnitude(spectrum);
  let s = 0;
  let count = 0;
  for (let j = 0; j < mag.length; j++) {
    if (spectrum.x[j] >= settings.rRange[0] && spectrum.x[j] <= settings.rRange[1]) {
      s += mag[j] * mag[j];
      count++;
    }
  }
  if (count === 0) throw new ComputationError(`the transform reaches only ${spectrum.x[spectrum.x.length - 1].toFixed(1)} Å, short of the noise range ${settings.rRange[0]}-${settings.rRange[1]} Å`);
  const epsR = Math.sqrt(s / count);
  const w = windowOnGrid(window, k);
  let sw = 0;
  for (let i = 0; i < k.length; i++) {
    const g = Math.pow(k[i], settings.kWeighting) * w[i];
    sw += g * g;
  }
  const epsK = sw > 0 ? (epsR * Math.sqrt(Math.PI)) / (dk * Math.sqrt(sw)) : NaN;
  return { k: epsK, r: epsR, kWeighting: settings.kWeighting, kRange: [window.min, window.max], rRange: [...settings.rRange], windowShape: settings.windowShape, windowTaper: settings.windowTaper };
}
