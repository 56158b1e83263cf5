/**
 * Background refined against a theoretical standard (Newville et al., Phys. Rev. B 47, 14126
 * (1993)): on invented data with a known answer (src/reduce/synthetic.ts: a short first shell,
 * 4 neighbours at 1.95 Å, on a smooth arctangent edge with a quadratic post-edge), the background
 * matched to zero below R_cut takes part of the shell's low-R leak, and the one matched to the
 * shell's own chi(k) does not, while the shell's |chi(R)| peak survives.
 */
import { describe, expect, it } from 'vitest';
import { forwardTransform, magnitude } from '../src/numeric/fourier';
import { reduceScan, refineBackgroundWithModel, syntheticChi, syntheticScan, type Chi } from '../src/reduce/index';

const SHELLS = [{ n: 4, r: 1.95, msrd: 0.003 }];

/**
 * rms of chi - s chi_true over k 3-12, s the least-squares scale: the edge-step normalisation
 * scales chi by a few per cent whatever the background, so only the shape error is compared.
 */
function errorRms(chi: Chi): number {
  let sxy = 0;
  let sxx = 0;
  chi.k.forEach((k, i) => {
    if (k < 3 || k > 12) return;
    const t = syntheticChi(k, SHELLS);
    sxy += chi.chi[i] * t;
    sxx += t * t;
  });
  const scale = sxy / sxx;
  let d = 0;
  let count = 0;
  chi.k.forEach((k, i) => {
    if (k < 3 || k > 12) return;
    d += (chi.chi[i] - scale * syntheticChi(k, SHELLS)) ** 2;
    count++;
  });
  return Math.sqrt(d / count);
}

/** Largest |chi(R)|, k^2, Hann k 3-12 (taper 1), over R 1-2.5 Å. */
function peak(k: Float64Array, chi: Float64Array): number {
  const t = forwardTransform(k, chi, { kWeighting: 2, window: { shape: 'hann', min: 3, max: 12, taper: 1 } });
  const m = magnitude(t);
  let best = 0;
  t.x.forEach((r, i) => { if (r >= 1 && r <= 2.5) best = Math.max(best, m[i]); });
  return best;
}

/** rms of the true chi over k 3-12. */
function errorRmsScale(): number {
  let s = 0;
  let n = 0;
  for (let k = 3; k <= 12; k += 0.05) { s += syntheticChi(k, SHELLS) ** 2; n++; }
  return Math.sqrt(s / n);
}

describe('background with a standard', () => {
  const scan = syntheticScan({ shells: SHELLS, e0: 8979 });
  const plain = reduceScan(scan, { e0: 8979 }).chi;
  const truth = plain.k.map((k) => syntheticChi(k, SHELLS));
  const withStandard = reduceScan(scan, { e0: 8979, standard: truth }).chi;

  it('takes less of a short first shell than the background driven to zero', () => {
    const before = errorRms(plain);
    const after = errorRms(withStandard);
    // the property: matching the standard's low-R transform leaves the shell in chi
    expect(after).toBeLessThan(0.8 * before);
    // the plain background does take a measurable part (else the comparison says nothing)
    expect(before).toBeGreaterThan(0.02 * errorRmsScale());
  });

  it('keeps the first-shell |chi(R)| peak: within 3 % of the true one (the edge-step scale is 2-3 %), not below the plain one', () => {
    const exact = peak(plain.k, truth);
    const kept = peak(withStandard.k, withStandard.chi);
    expect(Math.abs(kept / exact - 1)).toBeLessThan(0.03);
    expect(kept).toBeGreaterThanOrEqual(peak(plain.k, plain.chi) * 0.999);
  });

  it('refineBackgroundWithModel feeds each fit model back and stops when the value settles', () => {
    const seen: (Float64Array | null)[] = [];
    const out = refineBackgroundWithModel(
      (standard) => { seen.push(standard); return reduceScan(scan, { e0: 8979, standard }).chi; },
      (chi) => ({ result: errorRms(chi), model: truth, value: errorRms(chi) }),
      { maxIterations: 5, tolerance: 1e-9 },
    );
    expect(seen[0]).toBeNull();
    expect(seen[1]).toBe(truth);
    expect(out.converged).toBe(true);
    expect(out.history.length).toBeLessThanOrEqual(6);
    expect(out.history[out.history.length - 1]).toBeCloseTo(errorRms(withStandard), 12);
  });
});
