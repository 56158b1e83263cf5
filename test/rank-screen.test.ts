/**
 * Hypotheses from one base structure (src/rank/screen.ts): the --vary grammar, combination of
 * dimensions, equivalent variants generated once, names that say what changed, and a screen run
 * end to end that finds the hypothesis the data were simulated from. Structures and data are
 * invented for the test; scattering from the parametric provider (approximate).
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { InputError } from '../src/core/errors';
import { applyChanges, type FrameRef } from '../src/rank/candidates';
import { generateVariants, parseVary } from '../src/rank/screen';
import { chiToJson } from '../src/reduce/index';
import { latticeFromParameters, makeStructure } from '../src/structure/structure';
import { shellsOfStructure } from '../src/paths/index';
import { cli } from './helpers/cli';
import { clusterOf, syntheticChi, xyzFrame } from './helpers/rank-synthetic';

const REF: FrameRef = { file: 'base.xyz', sha256: 'test', frame: 0 };
const SETTINGS = { absorber: { index: 0 }, edge: 'K' as const, radius: 4.6, tolerance: 0.01 };

describe('parseVary', () => {
  it('reads the four kinds of variation', () => {
    expect(parseVary('substitute:O.1=N,S')).toEqual({ kind: 'substitute', shell: 'O.1', to: ['N', 'S'] });
    expect(parseVary('remove:O.1=1..3')).toEqual({ kind: 'remove', shell: 'O.1', counts: [1, 2, 3] });
    expect(parseVary('remove:Fe.1=2,4')).toEqual({ kind: 'remove', shell: 'Fe.1', counts: [2, 4] });
    // zero strain is the unchanged choice, so it is not listed twice
    expect(parseVary('strain:-1..1/0.5')).toEqual({ kind: 'strain', percents: [-1, -0.5, 0.5, 1] });
    expect(parseVary('site')).toEqual({ kind: 'site' });
  });

  it('refuses anything else with an InputError naming --vary (property test over random text)', () => {
    fc.assert(fc.property(fc.string(), (text) => {
      try {
        parseVary(text);
      } catch (error) {
        expect(error).toBeInstanceOf(InputError);
        expect((error as InputError).key).toBe('--vary');
      }
    }), { numRuns: 300 });
    expect(() => parseVary('substitute:O.1=Xx')).toThrow(/not an element symbol/);
    expect(() => parseVary('strain:2..1/0.5')).toThrow(InputError);
  });
});

describe('applyChanges', () => {
  it('splits a shell on partial substitution and keeps the total coordination', () => {
    const paths = shellsOfStructure(clusterOf([{ species: 'O', n: 4, r: 1.95 }, { species: 'Zn', n: 12, r: 3.2 }], 'Zn'), { absorber: { index: 0 }, radius: 4 }).paths;
    const changed = applyChanges(paths, [{ kind: 'substitute', shell: 'O.1', to: 'N', count: 1 }, { kind: 'remove', shell: 'Zn.1', count: 2 }]);
    expect(changed.map((p) => [p.id, p.scatterer, p.degeneracy])).toEqual([['N.1', 'N', 1], ['O.1', 'O', 3], ['Zn.1', 'Zn', 10]]);
    expect(changed[0].r).toBeCloseTo(1.95, 6);
    expect(() => applyChanges(paths, [{ kind: 'remove', shell: 'O.1', count: 5 }])).toThrow(/holds 4 neighbours/);
    expect(() => applyChanges(paths, [{ kind: 'remove', shell: 'S.1', count: 1 }])).toThrow(/no shell 'S.1'/);
  });
});

describe('generateVariants', () => {
  it('combines dimensions, names each variant by its changes, and skips impossible ones', () => {
    const base = clusterOf([{ species: 'O', n: 4, r: 1.95 }, { species: 'Zn', n: 12, r: 3.2 }], 'Zn');
    const out = generateVariants(base, REF, [parseVary('substitute:O.1=N'), parseVary('remove:O.1=1')], SETTINGS);
    // (1 + 4 substitutions) x (1 + 1 removal) = 10 combinations; removing an O after all four became N is impossible
    expect(out.generated).toBe(10);
    expect(out.skipped.map((s) => s.name)).toEqual(['O.1: 4 of 4 O -> N; O.1: n 4 -> 3']);
    const names = out.specs.map((s) => s.name);
    expect(names[0]).toBe('base');
    expect(names).toContain('O.1: 2 of 4 O -> N');
    expect(names).toContain('O.1: 1 of 4 O -> N; O.1: n 4 -> 3');
    expect(out.specs.length + out.duplicates + out.skipped.length).toBe(out.generated);
  });

  it('generates equivalent absorber sites once (the 4 Zn of zinc blende are one site)', () => {
    // zinc-blende ZnSe, a = 5.6676 Å (from memory; test/helpers/crystals.ts uses the same value)
    const a = 5.6676;
    const fcc = [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
    const znse = makeStructure({
      species: [...fcc.map(() => 'Zn'), ...fcc.map(() => 'Se')],
      positions: [...fcc.flatMap(([u, v, w]) => [u * a, v * a, w * a]), ...fcc.flatMap(([u, v, w]) => [(u + 0.25) * a, (v + 0.25) * a, (w + 0.25) * a])],
      lattice: latticeFromParameters(a, a, a, 90, 90, 90),
    });
    const out = generateVariants(znse, REF, [parseVary('site')], { ...SETTINGS, absorber: { element: 'Zn' } });
    expect(out.generated).toBe(5);
    expect(out.specs.map((s) => s.name)).toEqual(['base']);
    expect(out.duplicates).toBe(4);
  });

  it('keeps inequivalent sites apart', () => {
    // two Zn far apart: one with 4 O at 1.95 Å, one with 6 O at 2.10 Å (invented)
    const one = clusterOf([{ species: 'O', n: 4, r: 1.95 }], 'Zn');
    const two = clusterOf([{ species: 'O', n: 6, r: 2.1 }], 'Zn');
    const positions = [...one.positions, ...Array.from(two.positions, (x, i) => (i % 3 === 0 ? x + 20 : x))];
    const both = makeStructure({ species: [...one.species, ...two.species], positions });
    const out = generateVariants(both, REF, [parseVary('site')], { ...SETTINGS, absorber: { element: 'Zn' } });
    // a finite cluster's base averages only sites with complete shells; here neither has them, so
    // the base is the deepest site (#5) alone and 'site Zn6 (#5)' is the base again
    expect(out.specs.map((s) => s.name)).toEqual(['base', 'site Zn1 (#0)']);
    expect(out.duplicates).toBe(1);
  });
});

describe('shellrank screen', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-screen-'));
    const base = clusterOf([{ species: 'O', n: 6, r: 2.0 }, { species: 'Fe', n: 12, r: 3.0 }, { species: 'O', n: 8, r: 3.55 }]);
    writeFileSync(join(dir, 'base.xyz'), xyzFrame(base, 'invented base cluster'));
    // the data come from the base with one O of the first shell removed, s0sq 0.9
    const truth = clusterOf([{ species: 'O', n: 5, r: 2.0 }, { species: 'Fe', n: 12, r: 3.0 }, { species: 'O', n: 8, r: 3.55 }]);
    writeFileSync(join(dir, 'data.json'), chiToJson(syntheticChi(truth, 11, 0.001)));
    return () => rmSync(dir, { recursive: true, force: true });
  });

  it('finds the removed neighbour and says what it fixed', async () => {
    const run = await cli(['screen', 'data.json', 'base.xyz', '--absorber', '#0', '--vary', 'remove:O.1=1..2', '--vary', 'strain:-1..1/1',
      '--provider', 'parametric', '--workers', '0', '--csv', '--out', 'out-screen'], dir);
    expect(run.code).toBe(0);
    expect(run.stderr).toContain('screen: 9 combinations');
    expect(run.stderr).toContain('S0^2 is fixed at 0.9');
    expect(run.stderr).toContain('the refinement keeps every hypothesis\'s distances');
    const rows = run.stdout.trim().split('\n').slice(1).map((l) => l.split(','));
    expect(rows).toHaveLength(9);
    expect(rows[0][0]).toBe('1');
    expect(rows[0][1]).toBe('O.1: n 6 -> 5');
    expect(rows[0][2]).toBe('best');
  }, 120_000);

  it('refuses a screen without --vary, and a shell the base does not have', async () => {
    const none = await cli(['screen', 'data.json', 'base.xyz', '--absorber', '#0', '--provider', 'parametric'], dir);
    expect(none.code).toBe(2);
    expect(none.stderr).toContain('--vary');
    const bad = await cli(['screen', 'data.json', 'base.xyz', '--absorber', '#0', '--provider', 'parametric', '--vary', 'remove:S.1=1'], dir);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toContain("the base has no shell 'S.1'");
  }, 60_000);
});
