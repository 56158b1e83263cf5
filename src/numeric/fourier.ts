/**
 * Fourier transforms between k, R and q space for EXAFS.
 *
 * Convention (unitary in the conjugate pair k <-> 2R):
 *   chi(R) = (1/sqrt(pi)) * integral dk  k^w chi(k) W(k) exp(+2 i k R)
 *   chi(q) = (1/sqrt(pi)) * integral dR  chi(R) W_R(R) exp(-2 i q R)
 * Since integral dR exp(2 i (k - k') R) = pi delta(k - k'), the pair is exactly inverse when
 * both windows are 1, so the back-transform of an unwindowed chi(R) returns k^w chi(k).
 * Discretised on k_n = n dk (n = 0..N-1, zero-padded to N points), R_j = j dR with
 * dR = pi / (N dk), so 2 k_n R_j = 2 pi n j / N and one FFT does the sum.
 * With N = 2048 and dk = 0.05 1/Å, dR = 0.0307 Å. Common practice, no source, for the
 * zero-padding and the 2R pairing; the 1/sqrt(pi) factor follows from the delta identity above.
 */
import { fftInPlace } from './fft';
import { windowOnGrid, type WindowSpec } from './window';

/** Complex spectrum on a uniform grid starting at 0. */
export interface ComplexSpectrum {
  /** Abscissa (R in Å, or q in 1/Å), uniform, from 0. */
  x: Float64Array;
  re: Float64Array;
  im: Float64Array;
}

export interface ForwardSettings {
  /** k-weight w in k^w chi(k). */
  kWeighting: number;
  window: WindowSpec;
  /** FFT length (power of two); default 2048. */
  nfft?: number;
}

export interface BackSettings {
  window: WindowSpec;
}

/** Magnitude |z| of a complex spectrum, point by point. */
export function magnitude(spectrum: ComplexSpectrum): Float64Array {
  const out = new Float64Array(spectrum.re.length);
  for (let i = 0; i < out.length; i++) out[i] = Math.hypot(spectrum.re[i], spectrum.im[i]);
  return out;
}

/** Step of a uniform grid and the index of its first point on the grid n*dk; throws if not uniform. */
export function uniformGridOffset(k: Float64Array): { step: number; offset: number } {
  if (k.length < 2) throw new RangeError('a Fourier transform needs at least 2 grid points');
  const step = k[1] - k[0];
  if (!(step > 0)) throw new RangeError('the k grid must increase');
  for (let i = 2; i < k.length; i++) {
    if (Math.abs(k[i] - k[i - 1] - step) > 1e-6 * step) {
      throw new RangeError(`the k grid must be uniform (step ${step} at the start, ${k[i] - k[i - 1]} at index ${i})`);
    }
  }
  const offset = Math.round(k[0] / step);
  if (Math.abs(offset * step - k[0]) > 1e-6 * step) {
    throw new RangeError(`the k grid must lie on multiples of its step (starts at ${k[0]}, step ${step})`);
  }
  return { step, offset };
}

/**
 * Forward transform k -> R of k^w chi(k) W(k). `k` must be uniform and on multiples of its step.
 * Returns chi(R) on R_j = j dR for j < nfft/2.
 */
export function forwardTransform(k: Float64Array, chi: Float64Array, settings: ForwardSettings): ComplexSpectrum {
  const n = settings.nfft ?? 2048;
  const { step, offset } = uniformGridOffset(k);
  if (offset + k.length > n) throw new RangeError(`the k grid (${offset + k.length} points from 0) exceeds the FFT length ${n}`);
  const window = windowOnGrid(settings.window, k);
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  const w = settings.kWeighting;
  for (let i = 0; i < k.length; i++) re[offset + i] = chi[i] * Math.pow(k[i], w) * window[i];
  fftInPlace(re, im, 1);
  const scale = step / Math.sqrt(Math.PI);
  const half = n / 2;
  const dr = Math.PI / (n * step);
  const x = new Float64Array(half);
  const outRe = new Float64Array(half);
  const outIm = new Float64Array(half);
  for (let j = 0; j < half; j++) {
    x[j] = j * dr;
    outRe[j] = re[j] * scale;
    outIm[j] = im[j] * scale;
  }
  return { x, re: outRe, im: outIm };
}

/**
 * Back transform R -> q of chi(R) W_R(R); the R spectrum must come from {@link forwardTransform}
 * (grid R_j = j dR with j < N/2). Returns the complex chi(q) on q_n = n dk, n < N/2; its real part
 * is the Fourier-filtered k^w chi(k) W(k).
 */
export function backTransform(spectrum: ComplexSpectrum, settings: BackSettings): ComplexSpectrum {
  const half = spectrum.x.length;
  const n = half * 2;
  const dr = spectrum.x[1] - spectrum.x[0];
  const dk = Math.PI / (n * dr);
  const window = windowOnGrid(settings.window, spectrum.x);
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  for (let j = 0; j < half; j++) {
    re[j] = spectrum.re[j] * window[j];
    im[j] = spectrum.im[j] * window[j];
  }
  // R = 0 is the edge of the half-range: it counts once, not twice, in the doubled sum below
  re[0] *= 0.5;
  im[0] *= 0.5;
  fftInPlace(re, im, -1);
  // The forward transform holds only the positive-R half, so the back sum over R_j >= 0 gives
  // half of the real signal's analytic pair; the factor 2 restores Re(chi(q)) = k^w chi(k).
  const scale = (2 * dr) / Math.sqrt(Math.PI);
  const x = new Float64Array(half);
  const outRe = new Float64Array(half);
  const outIm = new Float64Array(half);
  for (let i = 0; i < half; i++) {
    x[i] = i * dk;
    outRe[i] = re[i] * scale;
    outIm[i] = im[i] * scale;
  }
  return { x, re: outRe, im: outIm };
}

/** A uniform grid min, min+step, ..., up to max (inclusive within 1e-9 of a step). */
export function uniformGrid(min: number, max: number, step: number): Float64Array {
  const count = Math.floor((max - min) / step + 1e-9) + 1;
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) out[i] = min + i * step;
  return out;
}
