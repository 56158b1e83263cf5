/**
 * Glitch removal: points flagged by the user (by energy) and single-point spikes found by a
 * robust test. Each point is predicted from its four neighbours (i-2, i-1, i+1, i+2) by the cubic
 * through them (Lagrange interpolation on the measured energies), r_i = mu_i - p_i. A point is a
 * spike when |r_i| exceeds `threshold` times the scan's robust scale 1.4826 * median_i |r_i| (the
 * median absolute deviation scaled to a Gaussian sigma; Hampel, J. Am. Stat. Assoc. 69, 383
 * (1974)) and is the largest |r| within two points (a spike also disturbs its neighbours'
 * predictions). Points within `edgeGuardEv` of E0 are never flagged automatically: sharp edge
 * and white-line features are not glitches, and a cubic cannot tell them apart.
 */
import { InputError } from '../core/errors';
import { removeScanPoints, type Scan } from '../read/spectrum/scan';
import { findE0 } from './edge';

export interface GlitchSettings {
  /** Detect single-point spikes automatically; default false. */
  detect: boolean;
  /** Spike threshold in robust sigmas; default 10. */
  threshold: number;
  /** Energies (eV) of points to remove: the nearest point within `toleranceEv` of each. */
  energies: number[];
  /** Tolerance for flagged energies, eV; default 0.5. */
  toleranceEv: number;
  /** Energy range around E0 (eV, relative) never flagged automatically; default [-20, 50]. */
  edgeGuardEv: [number, number];
}

export const DEFAULT_GLITCHES: GlitchSettings = { detect: false, threshold: 10, energies: [], toleranceEv: 0.5, edgeGuardEv: [-20, 50] };

export interface RemovedPoint {
  energy: number;
  /** 1-based line of the point in its file (0 if made in memory). */
  line: number;
  reason: 'flagged' | 'detected';
}

/** Residual of each point from the cubic through its four neighbours (0 for the two points at each end). */
export function neighbourResiduals(energy: Float64Array, mu: Float64Array): Float64Array {
  const n = mu.length;
  const r = new Float64Array(n);
  for (let i = 2; i < n - 2; i++) {
    const x = energy[i];
    let p = 0;
    for (const a of [i - 2, i - 1, i + 1, i + 2]) {
      let w = 1;
      for (const b of [i - 2, i - 1, i + 1, i + 2]) if (b !== a) w *= (x - energy[b]) / (energy[a] - energy[b]);
      p += w * mu[a];
    }
    r[i] = mu[i] - p;
  }
  return r;
}

/**
 * Indices (0-based) of single-point spikes in mu (see the module comment). `guard` is an energy
 * range [lo, hi] (absolute eV) in which nothing is flagged.
 */
export function detectSpikes(energy: Float64Array, mu: Float64Array, threshold: number, guard: [number, number] | null = null): number[] {
  const n = mu.length;
  if (n < 9) return [];
  const r = neighbourResiduals(energy, mu);
  const abs = Array.from(r.subarray(2, n - 2), Math.abs).sort((a, b) => a - b);
  const scale = 1.4826 * abs[abs.length >> 1];
  if (!(scale > 0)) return [];
  const out: number[] = [];
  for (let i = 2; i < n - 2; i++) {
    const a = Math.abs(r[i]);
    if (a <= threshold * scale) continue;
    if (guard && energy[i] >= guard[0] && energy[i] <= guard[1]) continue;
    let largest = true;
    for (let j = Math.max(2, i - 2); j <= Math.min(n - 3, i + 2); j++) if (j !== i && Math.abs(r[j]) > a) largest = false;
    if (largest) out.push(i);
  }
  return out;
}

/**
 * Remove flagged and (optionally) detected glitches.
 * @throws InputError when a flagged energy matches no point within the tolerance.
 */
export function deglitchScan(scan: Scan, settings: GlitchSettings): { scan: Scan; removed: RemovedPoint[] } {
  const chosen = new Map<number, 'flagged' | 'detected'>();
  for (const e of settings.energies) {
    let best = -1;
    for (let i = 0; i < scan.energy.length; i++) if (best < 0 || Math.abs(scan.energy[i] - e) < Math.abs(scan.energy[best] - e)) best = i;
    if (best < 0 || Math.abs(scan.energy[best] - e) > settings.toleranceEv) {
      throw new InputError(`no point within ${settings.toleranceEv} eV of the flagged glitch energy ${e} eV`, { file: scan.info.file ?? undefined, key: 'glitches' });
    }
    chosen.set(best, 'flagged');
  }
  if (settings.detect) {
    const e0 = findE0(scan.energy, scan.mu, { smoothingEv: 0.5 }).value;
    const guard: [number, number] = [e0 + settings.edgeGuardEv[0], e0 + settings.edgeGuardEv[1]];
    for (const i of detectSpikes(scan.energy, scan.mu, settings.threshold, guard)) if (!chosen.has(i)) chosen.set(i, 'detected');
  }
  if (chosen.size === 0) return { scan, removed: [] };
  const indices = [...chosen.keys()].sort((a, b) => a - b);
  const removed = indices.map((i) => ({ energy: scan.energy[i], line: scan.lines[i], reason: chosen.get(i)! }));
  return { scan: removeScanPoints(scan, indices, { step: 'deglitch', removed }), removed };
}
