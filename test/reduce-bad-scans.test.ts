/**
 * Scans that cannot be reduced give a one-line InputError naming the file and what is wrong,
 * never a crash (DEVELOPERS.md, Errors): a scan that stops before the edge or starts after it,
 * too few points above the edge for the requested k range, a given E0 outside the scan, an
 * inverted edge, and bad settings.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors';
import { makeScan, readScan, type Scan } from '../src/read/spectrum/index';
import { reduceScan, syntheticScan, type ReductionOptions } from '../src/reduce/index';

const DATA = new URL('./data/', import.meta.url).pathname;

function failure(scan: Scan, options: ReductionOptions = {}): InputError {
  try {
    reduceScan(scan, options);
  } catch (e) {
    if (!(e instanceof InputError)) throw e;
    expect(e.message).not.toContain('\n');
    return e;
  }
  throw new Error('expected an InputError');
}

function window(scan: Scan, lo: number, hi: number): Scan {
  const keep = Array.from(scan.energy.keys()).filter((i) => scan.energy[i] >= lo && scan.energy[i] <= hi);
  const pick = (a: Float64Array) => keep.map((i) => a[i]);
  return makeScan({ energy: pick(scan.energy), mu: pick(scan.mu), lines: keep.map((i) => scan.lines[i]), info: scan.info });
}

describe('measured Cu scan cut short', () => {
  const cu = () => readScan(join(DATA, 'cu_metal_rt.xdi'));
  it('a scan that stops before the edge', () => {
    const e = failure(window(cu(), 0, 8950));
    expect(e.message).toMatch(/ends at 8949.* before the Cu K edge at 8978.9 eV/);
    expect(e.file).toMatch(/cu_metal_rt\.xdi$/);
  });
  it('a scan that starts after the edge', () => {
    expect(failure(window(cu(), 8990, 1e5)).message).toMatch(/starts at .* after .* the Cu K edge/);
  });
  it('a scan that starts under 10 eV below E0: no pre-edge (a line of 5 eV ending 5 eV below E0 is the least; src/reduce/reduce.ts)', () => {
    expect(failure(window(cu(), 8973, 1e5)).message).toMatch(/starts at .* only [\d.]+ eV below E0 = 8980\.\d\d eV: no pre-edge to fit/);
  });
  it('too few points above the edge for the requested k range', () => {
    const e = failure(cu(), { kMax: 20 });
    expect(e.message).toMatch(/too few points above the edge: the scan reaches k = 17\.\d\d 1\/Å .* short of the requested kMax = 20/);
    expect(e.key).toBe('kMax');
  });
  it('a scan that ends shortly above the edge (under 30 eV past E0: no post-edge to fit)', () => {
    expect(failure(window(cu(), 0, 9005)).message).toMatch(/too few points above the edge|post-edge range/);
  });
  it('a given E0 outside the scan', () => {
    expect(failure(cu(), { e0: 12000 }).message).toMatch(/given E0 12000 eV lies outside the scan/);
  });
});

describe('invented scans that cannot be reduced', () => {
  it('an inverted edge (mu falling through the edge) has no positive edge step', () => {
    const s = syntheticScan();
    const inverted = makeScan({ energy: s.energy, mu: s.mu.map((m) => -m) });
    expect(failure(inverted, { e0: 8979 }).message).toMatch(/no absorption edge/);
  });
  it('a scan with no element that stops before its step', () => {
    const s = syntheticScan();
    expect(failure(window(s, 0, 8985)).message).toMatch(/too few points above the edge|post-edge range/);
  });
  it('bad settings name the setting', () => {
    const s = syntheticScan();
    expect(failure(s, { background: { cutoffR: -1 } }).key).toBe('bkgCutoff');
    expect(failure(s, { normalisation: { preEdge: [-30, -150] } }).key).toBe('preEdge');
    expect(failure(s, { normalisation: { postEdgeOrder: 7 } }).key).toBe('postEdgeOrder');
  });
});
