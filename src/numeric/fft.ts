/**
 * Radix-2 complex fast Fourier transform (iterative Cooley-Tukey, Cooley and Tukey,
 * Math. Comp. 19, 297 (1965)), in place over separate real and imaginary Float64Arrays.
 *
 * Sign convention: `fft` computes X_j = sum_n x_n exp(+2 pi i n j / N) when `sign = +1`
 * and exp(-2 pi i n j / N) when `sign = -1`; no normalisation is applied.
 */

interface Plan {
  n: number;
  cos: Float64Array;
  sin: Float64Array;
  bitReverse: Uint32Array;
}

const plans = new Map<number, Plan>();

function planFor(n: number): Plan {
  let plan = plans.get(n);
  if (plan) return plan;
  if (n < 1 || (n & (n - 1)) !== 0) throw new RangeError(`FFT length must be a power of two, got ${n}`);
  const cos = new Float64Array(n / 2);
  const sin = new Float64Array(n / 2);
  for (let i = 0; i < n / 2; i++) {
    cos[i] = Math.cos((2 * Math.PI * i) / n);
    sin[i] = Math.sin((2 * Math.PI * i) / n);
  }
  const bits = Math.round(Math.log2(n));
  const bitReverse = new Uint32Array(n);
  for (let i = 0; i < n; i++) {
    let r = 0;
    for (let b = 0, x = i; b < bits; b++, x >>= 1) r = (r << 1) | (x & 1);
    bitReverse[i] = r;
  }
  plan = { n, cos, sin, bitReverse };
  plans.set(n, plan);
  return plan;
}

/**
 * In-place FFT of (re, im), length a power of two.
 * @param sign +1 for exp(+2 pi i n j / N), -1 for exp(-2 pi i n j / N).
 */
export function fftInPlace(re: Float64Array, im: Float64Array, sign: 1 | -1): void {
  const n = re.length;
  if (im.length !== n) throw new RangeError(`FFT: real part has ${n} values, imaginary part ${im.length}`);
  if (n <= 1) return;
  const { cos, sin, bitReverse } = planFor(n);
  for (let i = 0; i < n; i++) {
    const j = bitReverse[i];
    if (j > i) {
      let t = re[i]; re[i] = re[j]; re[j] = t;
      t = im[i]; im[i] = im[j]; im[j] = t;
    }
  }
  for (let size = 2; size <= n; size <<= 1) {
    const half = size >> 1;
    const step = n / size;
    for (let start = 0; start < n; start += size) {
      for (let m = 0; m < half; m++) {
        const wr = cos[m * step];
        const wi = sign * sin[m * step];
        const a = start + m;
        const b = a + half;
        const xr = re[b] * wr - im[b] * wi;
        const xi = re[b] * wi + im[b] * wr;
        re[b] = re[a] - xr;
        im[b] = im[a] - xi;
        re[a] += xr;
        im[a] += xi;
      }
    }
  }
}
