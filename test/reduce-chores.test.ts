/**
 * Beamline chores: energy calibration on the reference channel, aligning and merging repeated
 * scans, and glitch removal. Checked on invented scans whose shifts, noise and glitches are
 * known by construction (src/reduce/synthetic.ts), and on the measured spectra of test/data
 * (no glitch may be found in these clean public-domain scans).
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors';
import { edgeOf } from '../src/elements/index';
import { makeScan, readScan, type Scan } from '../src/read/spectrum/index';
import { calibrateScan, deglitchScan, DEFAULT_GLITCHES, DEFAULT_MERGE, detectSpikes, findE0, mergeScans, pointNoise, reduceScan, syntheticBackground, syntheticScan } from '../src/reduce/index';

const DATA = new URL('./data/', import.meta.url).pathname;

/** An invented scan moved by `shiftEv` in energy (a monochromator offset). */
function shifted(scan: Scan, shiftEv: number, extra: Partial<Parameters<typeof makeScan>[0]> = {}): Scan {
  return makeScan({ energy: scan.energy.map((e) => e + shiftEv), mu: scan.mu, info: scan.info, ...extra });
}

describe('energy calibration on the reference channel', () => {
  it('a reference edge measured 3.2 eV high is moved onto the tabulated Cu K edge (xraylib 4.0.0, 8978.9 eV)', () => {
    const tabulated = edgeOf('Cu', 'K').energy;
    const base = syntheticScan({ e0: tabulated });
    // the reference foil: a bare arctangent edge centred 3.2 eV above the tabulated energy
    const reference = base.energy.map((e) => syntheticBackground(e - 3.2, { e0: tabulated }));
    const scan = makeScan({ energy: base.energy, mu: base.mu, muReference: reference, info: { element: 'Cu', edge: 'K' } });
    const result = calibrateScan(scan);
    expect(result.shiftEv).toBeCloseTo(-3.2, 1);
    expect(result.tabulatedEdge).toBe(tabulated);
    expect(findE0(result.scan.energy, result.scan.muReference!, { smoothingEv: 0.5 }).value).toBeCloseTo(tabulated, 6);
    expect(result.scan.info.history.at(-1)).toMatchObject({ step: 'calibrate' });
  });
  it('without a reference channel it is a one-line InputError', () => {
    expect(() => calibrateScan(syntheticScan())).toThrow(/needs a reference channel/);
  });
  it('the reduction reports the calibration it applied', () => {
    const tabulated = edgeOf('Cu', 'K').energy;
    const base = syntheticScan({ e0: tabulated });
    const reference = base.energy.map((e) => syntheticBackground(e + 1.5, { e0: tabulated }));
    const scan = makeScan({ energy: base.energy, mu: base.mu, muReference: reference, info: { element: 'Cu', edge: 'K' } });
    const { chi } = reduceScan(scan, { calibrate: true });
    expect((chi.info.reduction.calibration as { shiftEv: number }).shiftEv).toBeCloseTo(1.5, 1);
  });
});

describe('aligning and merging repeated scans', () => {
  const scans = [0, 1.3, -0.7].map((shift, i) => shifted(syntheticScan({ noise: 0.003, seed: 10 + i }), shift));
  it('recovers the monochromator offsets of the repeats within 0.05 eV', () => {
    const merged = mergeScans(scans, DEFAULT_MERGE);
    expect(merged.shiftsEv[0]).toBe(0);
    expect(merged.shiftsEv[1]).toBeCloseTo(-1.3, 1);
    expect(Math.abs(merged.shiftsEv[1] + 1.3)).toBeLessThan(0.05);
    expect(Math.abs(merged.shiftsEv[2] - 0.7)).toBeLessThan(0.05);
    expect(merged.scan.info.history.at(-1)).toMatchObject({ step: 'merge', alignedOn: 'mu' });
  });
  it('averaging three equal-noise scans lowers the point noise by about sqrt(3) (within 20 %)', () => {
    const merged = mergeScans(scans, DEFAULT_MERGE);
    const single = pointNoise(scans[0].energy, scans[0].mu, 9100);
    const together = pointNoise(merged.scan.energy, merged.scan.mu, 9100);
    expect(single / together / Math.sqrt(3)).toBeGreaterThan(0.8);
    expect(single / together / Math.sqrt(3)).toBeLessThan(1.2);
  });
  it('noise weights favour the quieter scan (inverse variance: noise 0.001 vs 0.004 -> weights about 16:1)', () => {
    const quiet = syntheticScan({ noise: 0.001, seed: 1 });
    const loud = syntheticScan({ noise: 0.004, seed: 2 });
    const merged = mergeScans([quiet, loud], { ...DEFAULT_MERGE, weights: 'noise' });
    const ratio = merged.weights[0] / merged.weights[1];
    expect(ratio).toBeGreaterThan(10);
    expect(ratio).toBeLessThan(25);
  });
  it('bad weights and a single scan are one-line InputErrors', () => {
    expect(() => mergeScans(scans, { ...DEFAULT_MERGE, weights: [1, 2] })).toThrow(InputError);
    expect(() => mergeScans(scans.slice(0, 1), DEFAULT_MERGE)).toThrow(/at least two scans/);
  });
});

describe('glitch removal', () => {
  it('finds a single-point spike, removes it and lists its energy', () => {
    const clean = syntheticScan({ noise: 0.0005, seed: 4 });
    const mu = Float64Array.from(clean.mu);
    const at = 600;
    mu[at] += 0.05;
    const scan = makeScan({ energy: clean.energy, mu });
    const guard: [number, number] = [8979 - 20, 8979 + 50];
    expect(detectSpikes(scan.energy, scan.mu, DEFAULT_GLITCHES.threshold, guard)).toEqual([at]);
    expect(detectSpikes(clean.energy, clean.mu, DEFAULT_GLITCHES.threshold, guard)).toEqual([]);
    const { scan: out, removed } = deglitchScan(scan, { ...DEFAULT_GLITCHES, detect: true });
    expect(removed).toEqual([{ energy: clean.energy[at], line: 0, reason: 'detected' }]);
    expect(out.energy.length).toBe(clean.energy.length - 1);
  });
  it('removes flagged energies and reports them; a flagged energy matching no point is an InputError', () => {
    const scan = syntheticScan();
    const target = scan.energy[300];
    const { removed } = deglitchScan(scan, { ...DEFAULT_GLITCHES, energies: [target + 0.01] });
    expect(removed).toEqual([{ energy: target, line: 0, reason: 'flagged' }]);
    expect(() => deglitchScan(scan, { ...DEFAULT_GLITCHES, energies: [1] })).toThrow(/no point within 0.5 eV/);
  });
  it('on the measured spectra flags only the one pre-edge bump of the Cu file', () => {
    for (const f of ['fe_metal_rt.xdi', 'zn_znse_rt.xdi']) {
      const { removed } = deglitchScan(readScan(join(DATA, f)), { ...DEFAULT_GLITCHES, detect: true });
      expect(removed).toEqual([]);
    }
    const cu = readScan(join(DATA, 'cu_metal_rt.xdi'));
    const { removed } = deglitchScan(cu, { ...DEFAULT_GLITCHES, detect: true });
    expect(removed.map((r) => [r.energy, r.line])).toEqual([[8839, 35]]);
    // the file's own numbers (mutrans, lines 34-36): the point stands above both neighbours in a
    // pre-edge that otherwise falls smoothly by a few thousandths per 10 eV
    const m = cu.channels.mutrans;
    const i = cu.energy.indexOf(8839);
    expect(m[i] - m[i - 1]).toBeGreaterThan(0.005);
    expect(m[i] - m[i + 1]).toBeGreaterThan(0.005);
  });
});
