/**
 * An invented absorption scan with a known chi(k), for tests, benchmarks and demonstrations:
 *
 *   mu(E) = pre(E) + step * [A(E) * (1 + post(E)) + chi(k(E)) * theta(E - E0)]
 *
 * with a linear pre-edge pre(E), an arctangent edge A(E) = 1/2 + atan(2 (E - E0) / width) / pi,
 * a smooth quadratic post-edge decline post(E), and chi(k) a sum of damped sine waves in the
 * form of the EXAFS equation (docs/methods.md) with invented amplitudes, distances and disorder. By
 * construction the exact chi is (mu - mu0) / step with mu0 = pre + step * A * (1 + post), which is
 * what the reduction must recover. Optional Gaussian noise from a seeded generator (mulberry32,
 * Box-Muller). Nothing here is measured data.
 */
import { K2_PER_EV } from '../core/constants';
import { makeScan, type Scan } from '../read/spectrum/scan';

export interface SyntheticShell {
  /** Coordination number. */
  n: number;
  /** Distance, Å. */
  r: number;
  /** MSRD sigma^2, Å^2. */
  msrd: number;
}

export interface SyntheticScanOptions {
  /** Total number of energy points; default 1000. */
  points?: number;
  /** Edge energy, eV; default 8979. */
  e0?: number;
  /** Highest k, 1/Å; default 16. */
  kMax?: number;
  /** Edge step, mu units; default 1.2. */
  step?: number;
  /** Arctangent edge width, eV; default 1.5. */
  edgeWidth?: number;
  shells?: SyntheticShell[];
  /** Gaussian noise (rms, mu units); default 0. */
  noise?: number;
  seed?: number;
}

export const DEFAULT_SYNTHETIC_SHELLS: readonly SyntheticShell[] = [
  { n: 12, r: 2.55, msrd: 0.0085 },
  { n: 6, r: 3.61, msrd: 0.012 },
];

/** The exact chi(k) of {@link syntheticScan} (invented amplitude and phase functions). */
export function syntheticChi(k: number, shells: readonly SyntheticShell[] = DEFAULT_SYNTHETIC_SHELLS): number {
  if (k <= 0) return 0;
  let s = 0;
  const amplitude = 0.6 * (1 - Math.exp(-(k * k) / 4)) * Math.exp(-k / 12);
  for (const sh of shells) {
    const phase = 2 * k * sh.r - 0.8 - 0.35 * k;
    s += ((sh.n * amplitude) / (k * sh.r * sh.r)) * Math.exp(-2 * sh.msrd * k * k) * Math.exp(-(2 * sh.r) / 10) * Math.sin(phase);
  }
  return s;
}

function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Smooth part of the synthetic absorption (everything except chi), mu units. */
export function syntheticBackground(energy: number, options: SyntheticScanOptions = {}): number {
  const e0 = options.e0 ?? 8979;
  const step = options.step ?? 1.2;
  const width = options.edgeWidth ?? 1.5;
  const x = (energy - e0) / 1000;
  const pre = 0.35 - 0.25 * x;
  const post = -0.12 * x + 0.03 * x * x;
  const edge = 0.5 + Math.atan((2 * (energy - e0)) / width) / Math.PI;
  return pre + step * edge * (1 + post);
}

/** Build the invented scan (see the module comment). */
export function syntheticScan(options: SyntheticScanOptions = {}): Scan {
  const points = options.points ?? 1000;
  const e0 = options.e0 ?? 8979;
  const kMax = options.kMax ?? 16;
  const step = options.step ?? 1.2;
  const shells = options.shells ?? DEFAULT_SYNTHETIC_SHELLS;
  const nPre = Math.round(points * 0.05);
  const nEdge = Math.round(points * 0.12);
  const nExafs = points - nPre - nEdge;
  const energy: number[] = [];
  for (let i = 0; i < nPre; i++) energy.push(e0 - 200 + (170 * i) / nPre);
  const eK2 = 4 / K2_PER_EV; // E - E0 at k = 2
  for (let i = 0; i < nEdge; i++) energy.push(e0 - 30 + ((30 + eK2) * i) / nEdge);
  for (let i = 0; i < nExafs; i++) {
    const k = 2 + ((kMax - 2) * i) / (nExafs - 1);
    energy.push(e0 + (k * k) / K2_PER_EV);
  }
  const random = mulberry32(options.seed ?? 1);
  const mu = energy.map((e) => {
    const k = e > e0 ? Math.sqrt(K2_PER_EV * (e - e0)) : 0;
    let m = syntheticBackground(e, options) + step * syntheticChi(k, shells);
    if (options.noise) {
      const u = Math.max(random(), 1e-300);
      const v = random();
      m += options.noise * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
    }
    return m;
  });
  return makeScan({
    energy,
    mu,
    channels: { energy: Float64Array.from(energy), mu: Float64Array.from(mu) },
    info: {
      format: 'memory',
      element: null,
      edge: null,
      signal: 'mu',
      muFormula: 'synthetic',
      comments: 'invented scan with a known chi(k) (src/reduce/synthetic.ts); not measured data',
    },
  });
}
