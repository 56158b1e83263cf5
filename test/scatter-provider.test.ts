/**
 * The firstPrinciples provider: table shape and provenance, the disk cache (keyed by every input,
 * bypassed with cache: false, folder from option > $SHELLRANK_CACHE_DIR > $XDG_CACHE_HOME), the
 * phase convention phase = 2 delta_c - l pi + arg F, and trade facts of backscattering amplitudes
 * (common practice, no source: heavier backscatterers have their amplitude maximum at higher k in the
 * EXAFS range; Pt and Pb show a deep amplitude minimum at intermediate k, a Ramsauer-Townsend-like
 * effect, e.g. the amplitude plots of Teo and Lee, J. Am. Chem. Soc. 101, 2815 (1979), from memory).
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { combineChannels } from '../src/scatter/amplitude';
import { computeFirstPrinciples, DEFAULT_FIRST_PRINCIPLES_SETTINGS, type ClusterMemo } from '../src/scatter/first-principles';
import { firstPrinciplesKey, firstPrinciplesProvider, resolveCacheDir, scatteringCacheChecksum } from '../src/scatter/provider-first-principles';
import type { ScatteringRequest } from '../src/scatter/provider';

const folder = mkdtempSync(join(tmpdir(), 'shellrank-scatter-test-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

const kGrid = new Float64Array(121).map((_, i) => 2 + i * 0.1);
const cuRequest: ScatteringRequest = {
  absorber: 'Cu',
  scatterer: 'Cu',
  edge: 'K',
  distance: 2.556,
  k: kGrid,
  environment: { absorber: [{ species: 'Cu', distance: 2.556, count: 12 }], scatterers: { Cu: [{ species: 'Cu', distance: 2.556, count: 12 }] } },
};

describe('firstPrinciples provider and its cache', () => {
  it('returns finite tables of the requested length with provenance, and reads them back from the disk cache', () => {
    const provider = firstPrinciplesProvider({ cacheDir: folder });
    const table = provider.compute(cuRequest);
    expect(table.amplitude.length).toBe(kGrid.length);
    expect(table.info.provider).toBe('firstPrinciples');
    expect(table.info.approximate).toBe(false);
    for (const column of [table.amplitude, table.phase, table.meanFreePath]) for (const v of column) expect(Number.isFinite(v)).toBe(true);
    const files = readdirSync(folder).filter((f) => f.endsWith('.json'));
    expect(files.length).toBe(1);
    // doctor the cached amplitude and its checksum consistently: a second provider must return it
    // (so it read the file)
    const path = join(folder, files[0]);
    const data = JSON.parse(readFileSync(path, 'utf8'));
    data.amplitude[0] = 123;
    data.checksum = scatteringCacheChecksum(data);
    writeFileSync(path, JSON.stringify(data));
    const again = firstPrinciplesProvider({ cacheDir: folder }).compute(cuRequest);
    expect(again.amplitude[0]).toBe(123);
    expect(Array.from(again.phase)).toEqual(Array.from(table.phase));
    // tampered without fixing the checksum (doubled amplitudes): recomputed and rewritten
    const tampered = JSON.parse(readFileSync(path, 'utf8'));
    tampered.amplitude = tampered.amplitude.map((a: number) => 2 * a);
    writeFileSync(path, JSON.stringify(tampered));
    const recomputed = firstPrinciplesProvider({ cacheDir: folder }).compute(cuRequest);
    expect(Array.from(recomputed.amplitude)).toEqual(Array.from(table.amplitude));
    expect(JSON.parse(readFileSync(path, 'utf8')).amplitude[1]).toBe(table.amplitude[1]);
    // a record without a checksum is not trusted either
    const unsigned = JSON.parse(readFileSync(path, 'utf8'));
    delete unsigned.checksum;
    unsigned.amplitude[0] = 123;
    writeFileSync(path, JSON.stringify(unsigned));
    expect(firstPrinciplesProvider({ cacheDir: folder }).compute(cuRequest).amplitude[0]).toBe(table.amplitude[0]);
    // cache: false ignores it
    const fresh = firstPrinciplesProvider({ cacheDir: folder, cache: false }).compute(cuRequest);
    expect(fresh.amplitude[0]).toBe(table.amplitude[0]);
  });
  it('keys the cache by every input: settings, distance and environment change the key', () => {
    const base = firstPrinciplesKey(cuRequest, DEFAULT_FIRST_PRINCIPLES_SETTINGS);
    expect(firstPrinciplesKey(cuRequest, { ...DEFAULT_FIRST_PRINCIPLES_SETTINGS, overlap: 0.15 })).not.toBe(base);
    expect(firstPrinciplesKey({ ...cuRequest, distance: 2.5561 }, DEFAULT_FIRST_PRINCIPLES_SETTINGS)).not.toBe(base);
    expect(firstPrinciplesKey({ ...cuRequest, environment: undefined }, DEFAULT_FIRST_PRINCIPLES_SETTINGS)).not.toBe(base);
    expect(firstPrinciplesKey({ ...cuRequest, absorber: 'cu' }, DEFAULT_FIRST_PRINCIPLES_SETTINGS)).toBe(base);
  });
  it('a cluster memo shared by two shells of one environment builds one stage and changes no number', () => {
    const k = new Float64Array([3, 6, 9, 12]);
    const environment = {
      absorber: [{ species: 'Fe', distance: 2.4825, count: 8 }, { species: 'Fe', distance: 2.8665, count: 6 }],
      scatterers: { Fe: [{ species: 'Fe', distance: 2.4825, count: 8 }, { species: 'Fe', distance: 2.8665, count: 6 }] },
    };
    const first: ScatteringRequest = { absorber: 'Fe', scatterer: 'Fe', edge: 'K', distance: 2.4825, k, environment };
    const second: ScatteringRequest = { ...first, distance: 2.8665 };
    const memo: ClusterMemo = new Map();
    const shared = [first, second].map((r) => computeFirstPrinciples(r, DEFAULT_FIRST_PRINCIPLES_SETTINGS, undefined, memo));
    expect(memo.size).toBe(1);
    const alone = [first, second].map((r) => computeFirstPrinciples(r));
    for (let j = 0; j < 2; j++) {
      expect(Array.from(shared[j].amplitude)).toEqual(Array.from(alone[j].amplitude));
      expect(Array.from(shared[j].phase)).toEqual(Array.from(alone[j].phase));
      expect(Array.from(shared[j].meanFreePath)).toEqual(Array.from(alone[j].meanFreePath));
    }
  });
  it('with cache: false writes nothing', () => {
    const empty = mkdtempSync(join(tmpdir(), 'shellrank-scatter-nocache-'));
    firstPrinciplesProvider({ cacheDir: empty, cache: false }).compute({ ...cuRequest, k: new Float64Array([3, 4, 5]) });
    expect(readdirSync(empty).length).toBe(0);
    rmSync(empty, { recursive: true, force: true });
  });
  it('finds the cache folder: option, then SHELLRANK_CACHE_DIR, then XDG_CACHE_HOME/shellrank, then ~/.cache/shellrank', () => {
    expect(resolveCacheDir({ cacheDir: '/a', env: { SHELLRANK_CACHE_DIR: '/b' } })).toBe('/a');
    expect(resolveCacheDir({ env: { SHELLRANK_CACHE_DIR: '/b', XDG_CACHE_HOME: '/c' } })).toBe('/b');
    expect(resolveCacheDir({ env: { XDG_CACHE_HOME: '/c' } })).toBe(join('/c', 'shellrank'));
    expect(resolveCacheDir({ env: {} }).endsWith(join('.cache', 'shellrank'))).toBe(true);
  });
});

describe('phase convention and physical shape', () => {
  it('a single K-edge channel gives phase = 2 delta_1 - pi + arg F (mod 2 pi)', () => {
    const delta = 0.7;
    const f: [number, number] = [0.3, -0.2];
    const [zr, zi] = combineChannels([{ l: 1, weight: 1, centralRe: delta, centralIm: 0, amplitude: f }]);
    let d = Math.atan2(zi, zr) - (2 * delta - Math.PI + Math.atan2(f[1], f[0]));
    d -= 2 * Math.PI * Math.round(d / (2 * Math.PI));
    expect(Math.abs(d)).toBeLessThan(1e-12);
    expect(Math.hypot(zr, zi)).toBeCloseTo(Math.hypot(f[0], f[1]), 14);
  });
  it('Cu-Cu: the phase is continuous and falls with k, lambda lies in 3-40 Å over k = 3-14 1/Å (common practice, no source)', () => {
    const r = computeFirstPrinciples(cuRequest);
    for (let i = 1; i < kGrid.length; i++) expect(Math.abs(r.phase[i] - r.phase[i - 1])).toBeLessThan(0.5);
    const at = (k: number) => Math.round((k - 2) / 0.1);
    expect(r.phase[at(14)]).toBeLessThan(r.phase[at(6)] - 2);
    for (let k = 3; k <= 14; k++) {
      expect(r.meanFreePath[at(k)]).toBeGreaterThan(3);
      expect(r.meanFreePath[at(k)]).toBeLessThan(40);
    }
  });
  const peakK = (scatterer: string, distance: number) => {
    // 3-18 1/Å in steps of 0.02: O and S both peak near 3.2 1/Å, within 0.1 1/Å of each other, so the
    // grid must resolve less than that for the order to be seen at all
    const k = new Float64Array(751).map((_, i) => 3 + i * 0.02);
    const r = computeFirstPrinciples({
      absorber: 'Cu', scatterer, edge: 'K', distance, k,
      environment: { absorber: [{ species: scatterer, distance, count: 6 }], scatterers: { [scatterer]: [{ species: 'Cu', distance, count: 6 }] } },
    });
    let best = 0;
    for (let i = 0; i < k.length; i++) if (r.amplitude[i] > r.amplitude[best]) best = i;
    return { kPeak: k[best], k, amplitude: r.amplitude };
  };
  it('heavier backscatterers peak at higher k: O < S < Cu < Br over k = 3-18 1/Å (trade fact, common practice, no source)', () => {
    const peaks = [peakK('O', 2.0), peakK('S', 2.3), peakK('Cu', 2.5), peakK('Br', 2.5)].map((p) => p.kPeak);
    for (let i = 1; i < peaks.length; i++) expect(peaks[i]).toBeGreaterThan(peaks[i - 1]);
  });
  it('Pt shows an amplitude minimum at intermediate k, below 70 % of the maxima on both sides (trade fact, common practice, no source)', () => {
    const { k, amplitude } = peakK('Pt', 2.7);
    expect(k[k.length - 1]).toBeCloseTo(18, 9);
    let iMin = -1;
    for (let i = 0; i < k.length; i++) if (k[i] >= 4 && k[i] <= 10 && (iMin < 0 || amplitude[i] < amplitude[iMin])) iMin = i;
    const left = Math.max(...Array.from(amplitude.slice(0, iMin)));
    const right = Math.max(...Array.from(amplitude.slice(iMin)));
    expect(amplitude[iMin]).toBeLessThan(0.7 * left);
    expect(amplitude[iMin]).toBeLessThan(0.7 * right);
    // and the lobe beyond the minimum peaks at high k, beyond the maximum of Cu (heavier -> higher k)
    const iRight = iMin + Array.from(amplitude.slice(iMin)).indexOf(right);
    expect(k[iRight]).toBeGreaterThan(peakK('Cu', 2.5).kPeak);
  });
});
