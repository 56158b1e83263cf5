/**
 * EXAFS refinement: one or more measured chi(k) data sets, each with its scattering paths and
 * their tables, a set of named parameters (free, fixed, tied) and path rules that say how every
 * path's n, r, msrd, c3, c4 (and each data set's s0sq and e0) follow from the parameters.
 *
 * Residuals, per data set and k-weight w, divided by the measurement noise of that space so
 * several data sets and weights combine fairly:
 * - space 'k': W(k_i) k_i^w (chi_model - chi_data)(k_i) / eps_k,w on the data grid inside the k window;
 * - space 'r': Re and Im of chi_model(R) - chi_data(R) for R in [rMin, rMax], divided by eps_R / sqrt(2)
 *   (eps_R is the rms |chi(R)| of pure noise, from Parseval's theorem, so each of Re and Im carries eps_R^2 / 2);
 * - space 'q': Re chi(q) of the R-filtered difference for q in [kMin, kMax], divided by
 *   eps_k,w * sqrt(f), f = (integral of W_R^2 dR) / (pi / 2dk), the share of white noise the filter keeps.
 * eps_k,w = eps_chi * rms(k^w W) over the k window, with eps_chi the per-point noise of chi(k) from
 * the reduce stage (white-noise model; the noise of the high-R transform, Newville et al.,
 * Phys. Rev. B 47, 14126 (1993)). The Jacobian is analytic (src/model/exafs.ts), chained through
 * the parameter map (src/fit/parameters.ts); transforms are linear so they apply column by column.
 */
import { InputError } from '../../core/errors';
import { evaluateModel, type ModelParameters } from '../../model/exafs';
import { backTransform, forwardTransform, uniformGridOffset } from '../../numeric/fourier';
import { windowOnGrid, type WindowShape, type WindowSpec } from '../../numeric/window';
import type { ScatteringTable } from '../../scatter/provider';
import type { ScatteringPath } from '../../paths/pathset';
import { defineParameters, type ParameterSet, type ParameterSpec } from '../parameters';
import { independentPoints } from '../statistics';
import { noiseBlock, type NoiseBlock } from '../noise-propagation';

export type FitDomain = 'k' | 'R' | 'q';
export const FIT_DOMAINS: readonly FitDomain[] = ['k', 'R', 'q'];

/** How one path's quantities follow from the parameters: each an expression (often just a name). */
export interface PathRule {
  n: string;
  r: string;
  msrd: string;
  c3: string;
  c4: string;
}

export interface FitDataset {
  /** Name used in messages and output (e.g. the data file). */
  name: string;
  /** chi(k) on a uniform grid from 0 (or a multiple of its step). */
  k: Float64Array;
  chi: Float64Array;
  /** Per-point noise of chi(k) (white-noise model), from the reduce stage. */
  noiseChi: number;
  paths: readonly ScatteringPath[];
  tables: readonly ScatteringTable[];
  rules: readonly PathRule[];
  /** Expressions for S0^2 and the E0 shift of this data set (default 's0sq' and 'e0'). */
  s0sq?: string;
  e0?: string;
  kRange: [number, number];
  kWeightings: readonly number[];
  kTaper: { shape: WindowShape; taper: number };
  rRange: [number, number];
  rTaper: { shape: WindowShape; taper: number };
  fitIn: FitDomain;
}

/** A compiled, ready-to-evaluate refinement problem. */
export interface ExafsProblem {
  parameters: ParameterSet;
  /** Number of user parameters (the first entries of parameters.names). */
  userParameterCount: number;
  datasets: CompiledDataset[];
  nResiduals: number;
  nIndependent: number;
  /** residuals(free) and jacobian(free) for the least-squares solver. */
  residuals(free: Float64Array, out: Float64Array): void;
  jacobian(free: Float64Array, out: Float64Array): void;
  /** Curves of every data set at a point (for output and plots). */
  curves(free: Float64Array): DatasetCurves[];
  /** The weighted data vector (same layout as residuals), for the R-factor. */
  data: Float64Array;
  /**
   * How white noise of each data set's chi(k) (its `noiseChi` per point) reaches the residuals:
   * one block per data set (../noise-propagation.ts). Computed on first call, then kept.
   */
  noiseBlocks(): NoiseBlock[];
}

export interface CompiledDataset {
  spec: FitDataset;
  /** Index into parameters.names of s0sq, e0 and of each path's n, r, msrd, c3, c4. */
  s0sqIndex: number;
  e0Index: number;
  pathIndices: Int32Array; // 5 per path
  /** Model grid: data grid points up to the end of the k window support. */
  modelK: Float64Array;
  kTaper: WindowSpec;
  rTaper: WindowSpec;
  /** Window values on modelK. */
  windowK: Float64Array;
  /** Per k-weight: uniform noise of k^w chi W and, for q space, of the filtered signal. */
  noise: { kWeighting: number; epsK: number; epsR: number; epsQ: number }[];
  /** Indices of modelK inside [kMin, kMax]. */
  kInside: Int32Array;
  /** Indices of the R grid inside [rMin, rMax] (r space). */
  rInside: Int32Array;
  /** Offset of this data set in the residual vector and its length. */
  offset: number;
  length: number;
  nIndependent: number;
}

export interface DatasetCurves {
  name: string;
  k: Float64Array;
  data: Float64Array;
  model: Float64Array;
  perPath: Float64Array[];
}

const QUANTITIES = ['n', 'r', 'msrd', 'c3', 'c4'] as const;

/** Pad the fit window's support by its taper and check the data reach it. */
function modelGrid(spec: FitDataset): { modelK: Float64Array; kTaper: WindowSpec } {
  const [kMin, kMax] = spec.kRange;
  const kTaper: WindowSpec = { shape: spec.kTaper.shape, min: kMin, max: kMax, taper: spec.kTaper.taper };
  const end = kMax + spec.kTaper.taper / 2;
  const kLast = spec.k[spec.k.length - 1];
  // the data may stop up to two grid steps short of the range end (grids rarely land on it)
  if (kMax > kLast + 2 * (spec.k[1] - spec.k[0]) + 1e-9) {
    throw new InputError(`the data end at k = ${kLast.toFixed(2)} 1/Å, short of the fit range ${kMin}-${kMax} 1/Å`, { key: '--k', file: spec.name });
  }
  if (kMin < spec.k[0]) throw new InputError(`the data start at k = ${spec.k[0]}, above the fit range start ${kMin}`, { key: '--k', file: spec.name });
  let count = 0;
  while (count < spec.k.length && spec.k[count] <= end + 1e-9) count++;
  return { modelK: spec.k.slice(0, count), kTaper };
}

/** Options of {@link buildExafsProblem}. */
export interface BuildOptions {
  /**
   * Noise blocks of earlier problems, keyed by what they depend on (the data grid, noise, windows,
   * ranges, k-weights and space, not the model): a caller that fits many models to the same data
   * (ranking) passes one map to all of them and computes each block once.
   */
  noiseCache?: Map<string, NoiseBlock>;
}

/** Compile data sets and parameters into an evaluable problem (validates once). */
export function buildExafsProblem(parameters: readonly ParameterSpec[], datasets: readonly FitDataset[], options: BuildOptions = {}): ExafsProblem {
  if (datasets.length === 0) throw new InputError('a fit needs at least one data set');
  const specs: ParameterSpec[] = [...parameters];
  const internal = (name: string, expression: string): string => {
    specs.push({ name, expression, state: 'tied' });
    return name;
  };
  const layout: { s0sq: string; e0: string; paths: string[] }[] = datasets.map((d, di) => {
    if (d.paths.length !== d.tables.length || d.paths.length !== d.rules.length) {
      throw new InputError(`data set ${d.name}: ${d.paths.length} paths, ${d.tables.length} tables and ${d.rules.length} path rules must match`);
    }
    if (d.kWeightings.length === 0) throw new InputError('at least one k-weight is needed', { key: '--kw' });
    return {
      s0sq: internal(`_d${di}_s0sq`, d.s0sq ?? 's0sq'),
      e0: internal(`_d${di}_e0`, d.e0 ?? 'e0'),
      paths: d.rules.flatMap((rule, pi) => QUANTITIES.map((q) => internal(`_d${di}_p${pi}_${q}`, rule[q]))),
    };
  });
  const set = defineParameters(specs);
  const compiled: CompiledDataset[] = [];
  let offset = 0;
  let nInd = 0;
  datasets.forEach((spec, di) => {
    const { modelK, kTaper } = modelGrid(spec);
    const [rMin, rMax] = spec.rRange;
    if (!(rMax > rMin) || rMin < 0) throw new InputError(`bad R range ${rMin}:${rMax}`, { key: '--r' });
    const rTaper: WindowSpec = { shape: spec.rTaper.shape, min: rMin, max: rMax, taper: spec.rTaper.taper };
    const windowK = windowOnGrid(kTaper, modelK);
    const dk = modelK[1] - modelK[0];
    const kInside = Int32Array.from([...modelK.keys()].filter((i) => modelK[i] >= spec.kRange[0] - 1e-9 && modelK[i] <= spec.kRange[1] + 1e-9));
    // R grid of a 2048-point transform of this k step
    const dr = Math.PI / (2048 * dk);
    const rInside = Int32Array.from(Array.from({ length: 1024 }, (_, j) => j).filter((j) => j * dr >= rMin - 1e-9 && j * dr <= rMax + 1e-9));
    const rTaperSquared = (() => {
      let s = 0;
      for (let j = 0; j < 1024; j++) { const w = windowOnGrid(rTaper, Float64Array.of(j * dr))[0]; s += w * w * dr; }
      return s;
    })();
    const noise = spec.kWeightings.map((w) => {
      let s = 0;
      for (const i of kInside) s += (Math.pow(modelK[i], w) * windowK[i]) ** 2;
      const rmsWeight = Math.sqrt(s / kInside.length);
      const epsK = spec.noiseChi * rmsWeight;
      // Parseval on the unitary transform: integral |chi(R)|^2 dR over all R (both signs) equals
      // integral (k^w W eps)^2 dk; a real signal puts half of it at R > 0, spread evenly over
      // 0..pi/(2 dk) for white noise: rms |chi(R)| = eps * sqrt(sum (k^w W)^2 dk / (2 pi/(2dk)))
      let sw = 0;
      for (let i = 0; i < modelK.length; i++) sw += (Math.pow(modelK[i], w) * windowK[i]) ** 2 * dk;
      const epsR = spec.noiseChi * Math.sqrt(sw / (2 * (Math.PI / (2 * dk))));
      const epsQ = epsK * Math.sqrt(rTaperSquared / (Math.PI / (2 * dk)));
      if (!(epsK > 0) || !Number.isFinite(epsK)) throw new InputError(`data set ${spec.name}: the noise estimate ${spec.noiseChi} is not a positive number`);
      return { kWeighting: w, epsK, epsR, epsQ };
    });
    const perWeight = spec.fitIn === 'R' ? 2 * rInside.length : kInside.length;
    const length = perWeight * spec.kWeightings.length;
    const ind = independentPoints(spec.kRange[0], spec.kRange[1], rMin, rMax);
    nInd += ind;
    const pathIndices = Int32Array.from(layout[di].paths.map((n) => set.indexOf(n)));
    compiled.push({
      spec, s0sqIndex: set.indexOf(layout[di].s0sq), e0Index: set.indexOf(layout[di].e0), pathIndices,
      modelK, kTaper, rTaper, windowK, noise, kInside, rInside, offset, length, nIndependent: ind,
    });
    offset += length;
  });
  const nResiduals = offset;
  const nFree = set.freeNames.length;
  const nAll = set.names.length;

  const paramsFor = (values: Float64Array, d: CompiledDataset): ModelParameters => ({
    s0sq: values[d.s0sqIndex],
    e0: values[d.e0Index],
    paths: d.spec.paths.map((_, pi) => ({
      n: values[d.pathIndices[5 * pi]], r: values[d.pathIndices[5 * pi + 1]], msrd: values[d.pathIndices[5 * pi + 2]],
      c3: values[d.pathIndices[5 * pi + 3]], c4: values[d.pathIndices[5 * pi + 4]],
    })),
  });

  /** Project a chi-like column (on modelK, unweighted) into the residual layout of a data set. */
  const project = (d: CompiledDataset, column: Float64Array, out: Float64Array, stride: number, col: number, subtract?: Float64Array): void => {
    let row = d.offset;
    for (const noise of d.noise) {
      const w = noise.kWeighting;
      if (d.spec.fitIn === 'k') {
        for (const i of d.kInside) {
          const v = subtract ? column[i] - subtract[i] : column[i];
          out[row++ * stride + col] = (d.windowK[i] * Math.pow(d.modelK[i], w) * v) / noise.epsK;
        }
        continue;
      }
      const diff = subtract ? Float64Array.from(column, (v, i) => v - subtract[i]) : column;
      const spectrum = forwardTransform(d.modelK, diff, { kWeighting: w, window: d.kTaper });
      if (d.spec.fitIn === 'R') {
        const sigma = noise.epsR / Math.SQRT2;
        for (const j of d.rInside) out[row++ * stride + col] = spectrum.re[j] / sigma;
        for (const j of d.rInside) out[row++ * stride + col] = spectrum.im[j] / sigma;
        continue;
      }
      const q = backTransform(spectrum, { window: d.rTaper });
      for (const i of d.kInside) {
        // the q grid of the back-transform starts at 0 with the same step as modelK (grid offset handled by index)
        const qi = Math.round(d.modelK[i] / (d.modelK[1] - d.modelK[0]));
        out[row++ * stride + col] = q.re[qi] / noise.epsQ;
      }
    }
  };

  const dataCache = compiled.map((d) => d.spec.chi.slice(0, d.modelK.length));
  const values = new Float64Array(nAll);
  const data = new Float64Array(nResiduals);
  compiled.forEach((d, di) => project(d, dataCache[di], data, 1, 0));

  const residuals = (free: Float64Array, out: Float64Array): void => {
    set.values(free, values);
    compiled.forEach((d, di) => {
      const { chi } = evaluateModel(d.modelK, d.spec.tables, paramsFor(values, d));
      project(d, chi, out, 1, 0, dataCache[di]);
    });
  };

  const jacobian = (free: Float64Array, out: Float64Array): void => {
    set.values(free, values);
    const g = set.valueJacobian(free); // nAll x nFree
    out.fill(0);
    compiled.forEach((d) => {
      const { derivatives } = evaluateModel(d.modelK, d.spec.tables, paramsFor(values, d), { withDerivatives: true });
      const dv = derivatives!;
      const nk = d.modelK.length;
      // d chi / d free_j = sum over quantities q of (d chi / d q) * G[q, j]
      const sources: { index: number; column: Float64Array }[] = [
        { index: d.s0sqIndex, column: dv.s0sq },
        { index: d.e0Index, column: dv.e0 },
      ];
      dv.paths.forEach((p, pi) => {
        sources.push({ index: d.pathIndices[5 * pi], column: p.n });
        sources.push({ index: d.pathIndices[5 * pi + 1], column: p.r });
        sources.push({ index: d.pathIndices[5 * pi + 2], column: p.msrd });
        sources.push({ index: d.pathIndices[5 * pi + 3], column: p.c3 });
        sources.push({ index: d.pathIndices[5 * pi + 4], column: p.c4 });
      });
      const total = new Float64Array(nk);
      for (let j = 0; j < nFree; j++) {
        total.fill(0);
        let any = false;
        for (const s of sources) {
          const gij = g[s.index * nFree + j];
          if (gij === 0) continue;
          any = true;
          for (let i = 0; i < nk; i++) total[i] += gij * s.column[i];
        }
        if (any) project(d, total, out, nFree, j);
      }
    });
  };

  const curves = (free: Float64Array): DatasetCurves[] => {
    set.values(free, values);
    return compiled.map((d, di) => {
      const { chi, perPath } = evaluateModel(d.modelK, d.spec.tables, paramsFor(values, d), { perPath: true });
      return { name: d.spec.name, k: d.modelK, data: dataCache[di], model: chi, perPath: perPath as Float64Array[] };
    });
  };

  let blocks: NoiseBlock[] | null = null;
  const noiseBlocks = (): NoiseBlock[] => {
    blocks ??= compiled.map((d) => {
      const key = noiseKey(d);
      let block = options.noiseCache?.get(key);
      if (!block) {
        const { columns, matrix } = noiseMatrix(d);
        block = noiseBlock(0, d.length, columns.length, matrix);
        options.noiseCache?.set(key, block);
      }
      return { ...block, offset: d.offset };
    });
    return blocks;
  };

  return { parameters: set, userParameterCount: parameters.length, datasets: compiled, nResiduals, nIndependent: nInd, residuals, jacobian, curves, data, noiseBlocks };
}

/** Everything a noise block depends on (see {@link BuildOptions.noiseCache}). */
function noiseKey(d: CompiledDataset): string {
  const k = d.modelK;
  return JSON.stringify([d.spec.fitIn, k.length, k[0], k[1] - k[0], d.spec.noiseChi, d.noise, d.kTaper, d.rTaper, d.kInside.length, d.rInside.length, d.length]);
}

/** Points of a data set's model grid that reach its residuals: the support of the k window. */
function noiseColumns(d: CompiledDataset): number[] {
  return [...d.windowK.keys()].filter((i) => d.windowK[i] !== 0);
}

/**
 * d residual / d chi_data, times the data noise, for one compiled data set: rows in the residual
 * layout of the set (from its offset), columns the points of {@link noiseColumns}. Written out in
 * closed form for the transforms of ../../numeric/fourier.ts, with a_i = k_i^w W(k_i):
 * - k: a_i / eps_k,w on the diagonal;
 * - r: (dk / sqrt(pi)) a_i (cos, sin)(2 k_i R_j) / (eps_R / sqrt 2)  (the forward FFT, sign +);
 * - q: a_i Re h(g_i - q_l) / eps_q,w, where h is the R-window filter kernel: the R-filtered
 *   response to a unit at FFT index g depends on g - l alone and Re h is even, so one
 *   back-transform of a unit at the last index gives every entry.
 * test/fit-noise-propagation.test.ts checks each against the residual map applied to unit vectors.
 */
export function noiseMatrix(d: CompiledDataset): { columns: number[]; matrix: Float64Array } {
  const columns = noiseColumns(d);
  const c = columns.length;
  const matrix = new Float64Array(d.length * c);
  const k = d.modelK;
  const dk = k[1] - k[0];
  const sigmaChi = d.spec.noiseChi;
  const { offset: gridOffset } = uniformGridOffset(k);
  const nfft = 2048;
  let kernel: Float64Array | null = null;
  if (d.spec.fitIn === 'q') {
    const half = nfft / 2;
    const g = half - 1;
    const scale = dk / Math.sqrt(Math.PI);
    const dr = Math.PI / (nfft * dk);
    const x = new Float64Array(half);
    const re = new Float64Array(half);
    const im = new Float64Array(half);
    for (let j = 0; j < half; j++) {
      x[j] = j * dr;
      const phase = (2 * Math.PI * g * j) / nfft;
      re[j] = scale * Math.cos(phase);
      im[j] = scale * Math.sin(phase);
    }
    const q = backTransform({ x, re, im }, { window: d.rTaper });
    // Re h(delta) = q.re[g - |delta|]
    kernel = Float64Array.from({ length: half }, (_, delta) => q.re[g - delta]);
  }
  let row = 0;
  for (const noise of d.noise) {
    const w = noise.kWeighting;
    const weight = columns.map((i) => Math.pow(k[i], w) * d.windowK[i] * sigmaChi);
    if (d.spec.fitIn === 'k') {
      for (const i of d.kInside) {
        const col = columns.indexOf(i);
        if (col >= 0) matrix[row * c + col] = weight[col] / noise.epsK;
        row++;
      }
      continue;
    }
    if (d.spec.fitIn === 'R') {
      const factor = dk / Math.sqrt(Math.PI) / (noise.epsR / Math.SQRT2);
      const dr = Math.PI / (nfft * dk);
      for (const part of [Math.cos, Math.sin]) {
        for (const j of d.rInside) {
          const r = j * dr;
          for (let col = 0; col < c; col++) matrix[row * c + col] = factor * weight[col] * part(2 * k[columns[col]] * r);
          row++;
        }
      }
      continue;
    }
    for (const l of d.kInside) {
      const ql = Math.round(k[l] / dk);
      for (let col = 0; col < c; col++) {
        const delta = Math.abs(gridOffset + columns[col] - ql);
        matrix[row * c + col] = (weight[col] * kernel![delta]) / noise.epsQ;
      }
      row++;
    }
  }
  return { columns, matrix };
}
