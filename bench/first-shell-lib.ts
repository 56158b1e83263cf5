/**
 * Shared pieces of the first-shell measuring scripts (bench/first-shell-*.ts): the three crystals of
 * bench/measured-first-shell.ts (room-temperature handbook lattice constants named there), their
 * reduced measured spectra, first-principles tables, and an R-space fit of the first shell(s) with
 * the same model, window and parameters as bench/measured-first-shell.ts (s0sq, e0, r, msrd per
 * shell free; optionally r fixed or c3 free), plus the phase of a Fourier-filtered shell.
 * Not the official fit pipeline.
 */
import { join } from 'node:path';
import { fitLeastSquares } from '../src/fit/levenberg-marquardt';
import { evaluateModel, type ModelParameters } from '../src/model/exafs';
import { backTransform, forwardTransform, type ComplexSpectrum } from '../src/numeric/fourier';
import { shellsOfStructure, type PathSet, type ScatteringPath } from '../src/paths/index';
import { readScan } from '../src/read/spectrum/index';
import { reduceScan } from '../src/reduce/index';
import type { ScatteringProvider, ScatteringTable } from '../src/scatter/provider';
import { latticeFromParameters, makeStructure, type Structure } from '../src/structure/structure';

export const DATA = new URL('../test/data/', import.meta.url).pathname;

type Site = [string, number, number, number];
const FCC: [number, number, number][] = [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
export function cubic(a: number, sites: Site[]): Structure {
  return makeStructure({ species: sites.map((s) => s[0]), positions: sites.flatMap(([, u, v, w]) => [u * a, v * a, w * a]), lattice: latticeFromParameters(a, a, a, 90, 90, 90), info: { file: 'crystal', title: 'crystal' } });
}

export interface Sample {
  name: string;
  file: string;
  absorber: string;
  /** Lattice constant, Å. */
  a: number;
  sites: Site[];
  rMin: number;
  rMax: number;
  modelShellsUpTo: number;
}

export const SAMPLES: Sample[] = [
  { name: 'Cu', file: 'cu_metal_rt.xdi', absorber: 'Cu', a: 3.6149, sites: FCC.map(([u, v, w]) => ['Cu', u, v, w] as Site), rMin: 1.7, rMax: 2.9, modelShellsUpTo: 2.6 },
  { name: 'Fe', file: 'fe_metal_rt.xdi', absorber: 'Fe', a: 2.8665, sites: [['Fe', 0, 0, 0], ['Fe', 0.5, 0.5, 0.5]], rMin: 1.4, rMax: 3.0, modelShellsUpTo: 2.9 },
  {
    name: 'ZnSe', file: 'zn_znse_rt.xdi', absorber: 'Zn', a: 5.6676,
    sites: [...FCC.map(([u, v, w]) => ['Zn', u, v, w] as Site), ...FCC.map(([u, v, w]) => ['Se', u + 0.25, v + 0.25, w + 0.25] as Site)],
    rMin: 1.5, rMax: 2.8, modelShellsUpTo: 2.5,
  },
];

export const TABLE_K = new Float64Array(401).map((_, i) => Number((i * 0.05).toFixed(2)));

export function measuredChi(sample: Sample): { k: Float64Array; chi: Float64Array } {
  const chi = reduceScan(readScan(join(DATA, sample.file))).chi;
  return { k: chi.k, chi: chi.chi };
}

export function shellsAndTables(sample: Sample, provider: ScatteringProvider, a = sample.a, firstOnly = false): { pathSet: PathSet; shells: ScatteringPath[]; tables: ScatteringTable[] } {
  const pathSet = shellsOfStructure(cubic(a, sample.sites), { absorber: { element: sample.absorber }, radius: 6, edge: 'K' });
  const scale = a / sample.a;
  const shells = pathSet.paths.filter((p, i) => i === 0 || (!firstOnly && p.r <= sample.modelShellsUpTo * scale + 1e-9));
  const tables = shells.map((p) => provider.compute({ absorber: pathSet.absorber, scatterer: p.scatterer, edge: 'K', distance: p.r, k: TABLE_K, environment: pathSet.environment }));
  return { pathSet, shells, tables };
}

export interface FitOptions { kMin?: number; kMax?: number; kWeighting?: number; fixR?: boolean; freeC3?: boolean }

export interface ShellFit { dR: number; s0sq: number; e0: number; msrd: number[]; c3: number; params: ModelParameters; window: { min: number; max: number } }

/** R-space fit as in bench/measured-first-shell.ts. */
export function fitShells(sample: Sample, k: Float64Array, chi: Float64Array, shells: ScatteringPath[], tables: ScatteringTable[], options: FitOptions = {}): ShellFit {
  const kMin = options.kMin ?? 3;
  const top = Math.min(options.kMax ?? 14, k[k.length - 1] - 0.5);
  const window = { shape: 'hann' as const, min: kMin, max: top, taper: 1 };
  const transform = (x: Float64Array): ComplexSpectrum => forwardTransform(k, x, { kWeighting: options.kWeighting ?? 2, window });
  const data = transform(chi);
  const inRange: number[] = [];
  for (let j = 0; j < data.x.length; j++) if (data.x[j] >= sample.rMin && data.x[j] <= sample.rMax) inRange.push(j);
  const r1 = shells[0].r;
  const ns = shells.length;
  // parameter vector: s0sq, e0, r, msrd per shell, c3
  const all = (p: Float64Array): number[] => {
    const out = [p[0], p[1]];
    let i = 2;
    out.push(options.fixR ? r1 : p[i++]);
    for (let j = 0; j < ns; j++) out.push(p[i++]);
    out.push(options.freeC3 ? p[i++] : 0);
    return out;
  };
  const params = (p: Float64Array): ModelParameters => {
    const v = all(p);
    return { s0sq: v[0], e0: v[1], paths: shells.map((s, j) => ({ n: s.degeneracy, r: s.r * (v[2] / r1), msrd: v[3 + j], c3: j === 0 ? v[3 + ns] : 0, c4: 0 })) };
  };
  const initial = [0.9, 0, ...(options.fixR ? [] : [r1]), ...shells.map(() => 0.006), ...(options.freeC3 ? [0] : [])];
  const lower = [0.2, -25, ...(options.fixR ? [] : [r1 - 0.3]), ...shells.map(() => 0), ...(options.freeC3 ? [-0.002] : [])];
  const upper = [2, 25, ...(options.fixR ? [] : [r1 + 0.3]), ...shells.map(() => 0.04), ...(options.freeC3 ? [0.002] : [])];
  const np = initial.length;
  const m = 2 * inRange.length;
  const fill = (sp: ComplexSpectrum, out: Float64Array, col: number, stride: number, minus?: ComplexSpectrum) => inRange.forEach((j, q) => {
    out[2 * q * stride + col] = sp.re[j] - (minus ? minus.re[j] : 0);
    out[(2 * q + 1) * stride + col] = sp.im[j] - (minus ? minus.im[j] : 0);
  });
  let jac: Float64Array | null = null;
  const result = fitLeastSquares({
    nResiduals: m, initial, lower, upper,
    residuals(p, out) {
      const ev = evaluateModel(k, tables, params(p), { withDerivatives: true });
      fill(transform(ev.chi), out, 0, 1, data);
      const d = ev.derivatives!;
      jac = new Float64Array(m * np);
      let c = 0;
      fill(transform(d.s0sq), jac, c++, np);
      fill(transform(d.e0), jac, c++, np);
      if (!options.fixR) {
        const dr = new Float64Array(k.length);
        d.paths.forEach((dp, j) => { for (let i = 0; i < k.length; i++) dr[i] += dp.r[i] * (shells[j].r / r1); });
        fill(transform(dr), jac, c++, np);
      }
      d.paths.forEach((dp) => fill(transform(dp.msrd), jac!, c++, np));
      if (options.freeC3) fill(transform(d.paths[0].c3), jac, c++, np);
    },
    jacobian(_p, out) { out.set(jac!); },
  }, { maxIterations: 200 });
  const v = all(result.params);
  return { dR: v[2] - r1, s0sq: v[0], e0: v[1], msrd: v.slice(3, 3 + ns), c3: v[3 + ns], params: params(result.params), window: { min: kMin, max: top } };
}

/**
 * Phase (continuous, rad) and magnitude of the Fourier-filtered k^w chi: forward transform with the
 * fit's k window, back transform with a box-like R window [rMin, rMax], on the q grid (1/Å).
 */
export function filteredPhase(k: Float64Array, chi: Float64Array, window: { min: number; max: number }, rMin: number, rMax: number, kWeighting = 2): { q: Float64Array; phase: Float64Array; magnitude: Float64Array } {
  const forward = forwardTransform(k, chi, { kWeighting, window: { shape: 'hann', min: window.min, max: window.max, taper: 1 } });
  const back = backTransform(forward, { window: { shape: 'hann', min: rMin, max: rMax, taper: 0.1 } });
  const n = back.x.length;
  const phase = new Float64Array(n);
  const magnitude = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    phase[i] = Math.atan2(back.im[i], back.re[i]);
    magnitude[i] = Math.hypot(back.re[i], back.im[i]);
    if (i > 0) phase[i] -= 2 * Math.PI * Math.round((phase[i] - phase[i - 1]) / (2 * Math.PI));
  }
  return { q: back.x, phase, magnitude };
}
