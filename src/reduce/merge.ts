/**
 * Aligning and merging repeated scans of one sample.
 *
 * Alignment: each scan after the first is shifted in energy by the delta that minimises
 * sum (d_1(E) - d_s(E - delta))^2 over the edge region (E0 of the first scan -20..+60 eV), where
 * d is the smoothed derivative of mu (or of the reference channel), sampled on a 0.1 eV grid;
 * a grid search over +-searchEv in 0.05 eV steps, refined by a parabola through the best three.
 * Merge: every shifted scan is interpolated (piecewise cubic, src/reduce/interpolate.ts) onto the
 * first scan's energies within the range all scans cover, and averaged with weights: equal,
 * given, or inverse noise variance, the noise taken as the robust spread of the second
 * difference above the edge (for white noise of sigma, mu_i - (mu_{i-1} + mu_{i+1}) / 2 has
 * sigma sqrt(3/2); common practice, no source).
 */
import { InputError } from '../core/errors';
import { hashOf } from '../core/hash';
import { makeScan, type Scan } from '../read/spectrum/scan';
import { findE0, smoothedDerivative } from './edge';
import { interpolateCubic } from './interpolate';

export interface MergeSettings {
  /** Align on the sample mu, the reference channel, or not at all; default 'mu'. */
  alignOn: 'mu' | 'reference' | 'none';
  /** Largest shift searched, eV; default 10. */
  searchEv: number;
  /** 'equal', 'noise' (inverse variance) or one weight per scan; default 'equal'. */
  weights: 'equal' | 'noise' | number[];
  /** Derivative smoothing, eV; default 0.5. */
  smoothingEv: number;
}

export const DEFAULT_MERGE: MergeSettings = { alignOn: 'mu', searchEv: 10, weights: 'equal', smoothingEv: 0.5 };

export interface MergeResult {
  scan: Scan;
  /** Shift applied to each scan, eV (0 for the first). */
  shiftsEv: number[];
  /** Normalised weights (sum 1). */
  weights: number[];
  energyRange: [number, number];
}

/** Robust point-to-point noise of mu above `fromEnergy`. */
export function pointNoise(energy: Float64Array, mu: Float64Array, fromEnergy: number): number {
  const r: number[] = [];
  for (let i = 1; i < mu.length - 1; i++) if (energy[i] >= fromEnergy) r.push(Math.abs(mu[i] - (mu[i - 1] + mu[i + 1]) / 2));
  if (r.length < 3) return NaN;
  r.sort((a, b) => a - b);
  return (1.4826 * r[r.length >> 1]) / Math.sqrt(1.5);
}

function alignmentShift(base: { e: Float64Array; d: Float64Array }, energy: Float64Array, signal: Float64Array, smoothingEv: number, e0: number, searchEv: number): number {
  const d = smoothedDerivative(energy, signal, smoothingEv);
  const grid: number[] = [];
  for (let e = e0 - 20; e <= e0 + 60; e += 0.1) grid.push(e);
  const g = Float64Array.from(grid);
  const ref = interpolateCubic(base.e, base.d, g);
  const cost = (delta: number) => {
    const moved = interpolateCubic(energy, d, g.map((x) => x - delta));
    let s = 0;
    for (let i = 0; i < g.length; i++) s += (ref[i] - moved[i]) ** 2;
    return s;
  };
  const steps = Math.round(searchEv / 0.05);
  let best = 0;
  let bestCost = Infinity;
  const costs = new Map<number, number>();
  for (let m = -steps; m <= steps; m++) {
    const c = cost(m * 0.05);
    costs.set(m, c);
    if (c < bestCost) {
      bestCost = c;
      best = m;
    }
  }
  const c0 = costs.get(best - 1);
  const c2 = costs.get(best + 1);
  let delta = best * 0.05;
  if (c0 !== undefined && c2 !== undefined) {
    const curvature = c0 - 2 * bestCost + c2;
    if (curvature > 0) delta += (0.05 * (c0 - c2)) / (2 * curvature);
  }
  return delta;
}

/**
 * Align and merge scans.
 * @throws InputError for fewer than two scans, scans that do not overlap, bad weights, or
 *   alignment on a reference channel that a scan lacks.
 */
export function mergeScans(scans: readonly Scan[], settings: MergeSettings): MergeResult {
  if (scans.length < 2) throw new InputError('merging needs at least two scans', { key: 'merge' });
  const first = scans[0];
  const signalOf = (s: Scan) => {
    if (settings.alignOn !== 'reference') return s.mu;
    if (!s.muReference) throw new InputError('alignment on the reference channel, but this scan has none', { file: s.info.file ?? undefined, key: 'merge.alignOn' });
    return s.muReference;
  };
  const shifts = [0];
  if (settings.alignOn !== 'none') {
    const e0 = findE0(first.energy, signalOf(first), { smoothingEv: settings.smoothingEv }).value;
    const base = { e: first.energy, d: smoothedDerivative(first.energy, signalOf(first), settings.smoothingEv) };
    for (let s = 1; s < scans.length; s++) shifts.push(alignmentShift(base, scans[s].energy, signalOf(scans[s]), settings.smoothingEv, e0, settings.searchEv));
  } else for (let s = 1; s < scans.length; s++) shifts.push(0);
  let lo = -Infinity;
  let hi = Infinity;
  scans.forEach((s, i) => {
    lo = Math.max(lo, s.energy[0] + shifts[i]);
    hi = Math.min(hi, s.energy[s.energy.length - 1] + shifts[i]);
  });
  const keep: number[] = [];
  for (let i = 0; i < first.energy.length; i++) if (first.energy[i] >= lo - 1e-9 && first.energy[i] <= hi + 1e-9) keep.push(i);
  if (keep.length < 8) throw new InputError(`the scans overlap only over ${lo.toFixed(1)}-${hi.toFixed(1)} eV (${keep.length} points)`, { key: 'merge' });
  const grid = Float64Array.from(keep, (i) => first.energy[i]);

  let weights: number[];
  if (Array.isArray(settings.weights)) {
    if (settings.weights.length !== scans.length || settings.weights.some((w) => !(w >= 0)) || !settings.weights.some((w) => w > 0)) {
      throw new InputError(`give one non-negative weight per scan (${scans.length}), not all zero`, { key: 'merge.weights' });
    }
    weights = [...settings.weights];
  } else if (settings.weights === 'noise') {
    const e0 = findE0(first.energy, first.mu, { smoothingEv: settings.smoothingEv }).value;
    weights = scans.map((s, i) => {
      const sigma = pointNoise(s.energy, s.mu, e0 + 50 - shifts[i]);
      if (!(sigma > 0)) throw new InputError('cannot estimate the noise of this scan for weighting', { file: s.info.file ?? undefined, key: 'merge.weights' });
      return 1 / (sigma * sigma);
    });
  } else weights = scans.map(() => 1);
  const total = weights.reduce((a, b) => a + b, 0);
  weights = weights.map((w) => w / total);

  const mu = new Float64Array(grid.length);
  const reference = scans.every((s) => s.muReference) ? new Float64Array(grid.length) : null;
  scans.forEach((s, i) => {
    const at = grid.map((e) => e - shifts[i]);
    const m = interpolateCubic(s.energy, s.mu, at);
    for (let j = 0; j < grid.length; j++) mu[j] += weights[i] * m[j];
    if (reference) {
      const r = interpolateCubic(s.energy, s.muReference!, at);
      for (let j = 0; j < grid.length; j++) reference[j] += weights[i] * r[j];
    }
  });
  const record = scans.map((s, i) => ({ file: s.info.file, sha256: s.info.sha256, shiftEv: shifts[i], weight: weights[i] }));
  const scan = makeScan({
    energy: grid,
    mu,
    muReference: reference,
    channels: { energy: grid, mu },
    lines: Int32Array.from(keep, (i) => first.lines[i]),
    info: {
      ...first.info,
      format: 'merge',
      sha256: hashOf(scans.map((s) => s.info.sha256)),
      roles: { energy: 'energy', mu: 'mu' },
      warnings: scans.flatMap((s) => s.info.warnings),
      history: [
        ...first.info.history,
        { step: 'merge', scans: record, alignedOn: settings.alignOn, energyRange: [grid[0], grid[grid.length - 1]] },
      ],
    },
  });
  return { scan, shiftsEv: shifts, weights, energyRange: [grid[0], grid[grid.length - 1]] };
}
