/**
 * Saving and loading a reduced spectrum: our documented JSON document ("shellrank-chi" v1)
 * round-trips without loss, malformed documents give an InputError naming the key, and the XDI
 * output of the normalised data reads back through our XDI reader with the same numbers.
 */
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/core/errors';
import { parseXdi } from '../src/read/spectrum/index';
import { chiFromJson, chiToJson, makeChi, normalisedToXdi, reduceScan, syntheticScan } from '../src/reduce/index';

const { chi } = reduceScan(syntheticScan({ noise: 0.001, seed: 9 }));

describe('Chi JSON document', () => {
  it('round-trips without loss (arrays, scalars, report, provenance)', () => {
    for (const indent of [undefined, 1]) {
      const back = chiFromJson(chiToJson(chi, indent), 'chi.json');
      expect(Array.from(back.k)).toEqual(Array.from(chi.k));
      expect(Array.from(back.chi)).toEqual(Array.from(chi.chi));
      expect(back.e0).toBe(chi.e0);
      expect(back.edgeStep).toBe(chi.edgeStep);
      expect(back.noise).toEqual(chi.noise);
      for (const key of Object.keys(chi.normalised!) as (keyof typeof chi.normalised)[]) {
        expect(Array.from(back.normalised![key] as Float64Array)).toEqual(Array.from(chi.normalised![key] as Float64Array));
      }
      expect(back.info.reduction).toEqual(JSON.parse(JSON.stringify(chi.info.reduction)));
      expect(back.info.provenance).toEqual(chi.info.provenance);
      expect(chiToJson(back, indent)).toBe(chiToJson(chi, indent));
    }
  });
  it('holds the keys the issue asks for: e0, edgeStep, k, chi, noise.k, noise.r', () => {
    const doc = JSON.parse(chiToJson(chi));
    expect(doc).toMatchObject({ format: 'shellrank-chi', formatVersion: 1, e0: expect.any(Number), edgeStep: expect.any(Number) });
    expect(doc.k.length).toBe(doc.chi.length);
    expect(doc.noise).toMatchObject({ k: expect.any(Number), r: expect.any(Number) });
  });
  it('malformed documents are InputErrors naming the key', () => {
    const good = JSON.parse(chiToJson(chi));
    const bad = (mutate: (d: any) => void) => {
      const d = structuredClone(good);
      mutate(d);
      try {
        chiFromJson(JSON.stringify(d), 'bad.json');
      } catch (e) {
        expect(e).toBeInstanceOf(InputError);
        return (e as InputError).key;
      }
      throw new Error('expected an InputError');
    };
    expect(bad((d) => (d.format = 'something-else'))).toBe('format');
    expect(bad((d) => (d.k = 'abc'))).toBe('k');
    expect(bad((d) => d.chi.pop())).toBe('chi');
    expect(bad((d) => (d.edgeStep = -1))).toBe('edgeStep');
    expect(bad((d) => (d.noise.rRange = [1]))).toBe('noise.rRange');
    expect(() => chiFromJson('{"format": ', 'cut.json')).toThrow(/not valid JSON/);
  });
  it('the factory checks the grid and lengths', () => {
    const base = { k: [0, 0.05, 0.1], chi: [0, 1, 2], e0: 1, edgeStep: 1, noise: chi.noise };
    expect(() => makeChi({ ...base, k: [0, 0.05, 0.2] })).toThrow(/not uniform/);
    expect(() => makeChi({ ...base, chi: [1] })).toThrow(/chi has 1 values but k has 3/);
    expect(Object.isFrozen(makeChi(base))).toBe(true);
  });
});

describe('XDI output of the normalised data', () => {
  it('reads back through the XDI reader with identical columns and the reduction fields', () => {
    const text = normalisedToXdi(chi);
    const doc = parseXdi(text, 'norm.xdi');
    expect(doc.labels).toEqual(['energy', 'mutrans', 'pre_edge', 'post_edge', 'background', 'normtrans', 'detrended']);
    expect(Array.from(doc.table.columns[0])).toEqual(Array.from(chi.normalised!.energy));
    expect(Array.from(doc.table.columns[5])).toEqual(Array.from(chi.normalised!.normalised));
    expect(Number(doc.fields['Reduction.edge_step'])).toBe(chi.edgeStep);
    expect(doc.fields['Reduction.e0']).toBe(`${chi.e0} eV`);
  });
});
