/**
 * Verdicts and their pieces (src/rank/verdicts.ts, src/rank/progress.ts, src/rank/run.ts):
 * p-values of the tests against SciPy (python3-scipy via /usr/bin/python3), resolved shells and
 * equivalence, the order and the verdict words, the progress line and the shard syntax.
 */
import { describe, it, expect } from 'vitest';
import { InputError } from '../src/core/errors';
import type { FitStats } from '../src/fit/exafs/refine';
import { formatDuration, formatProgress } from '../src/rank/progress';
import { parseShard } from '../src/rank/run';
import { distanceResolution, equivalentSignatures, rankCandidates, resolvedShells, testAgainstBest, type ScoredCandidate } from '../src/rank/verdicts';
import { hasPythonModules, runPython } from './helpers/python';

function stats(chiSquare: number, nVaried: number, nIndependent = 20, rFactor = chiSquare / 1e4): FitStats {
  const dof = nIndependent - nVaried;
  return { rFactor, chiSquare, reducedChiSquare: chiSquare / dof, nIndependent, nVaried, nPoints: 100, degreesOfFreedom: dof, aic: 0, bic: 0 };
}
function scored(key: string, index: number, s: FitStats | null, signature: ScoredCandidate['signature'] = null, contains?: string[]): ScoredCandidate {
  return { key, index, ok: s !== null, stats: s, signature, ...(contains ? { contains } : {}) };
}

describe.skipIf(!hasPythonModules('scipy'))('p-values against SciPy (scipy.stats.f.sf)', () => {
  it('variance-ratio test of non-nested candidates, to 1e-9', () => {
    const best = scored('b', 0, stats(100, 5));
    const cases = [[130, 5], [180, 6], [250, 4], [101, 5]] as const;
    const ours = cases.map(([chi2, nv]) => testAgainstBest(scored('c', 1, stats(chi2, nv)), best));
    const reference = runPython<number[]>(`
import json, sys
from scipy.stats import f
out = []
for chi2, nv in json.load(sys.stdin):
    d1, d2 = 20 - nv, 15
    out.append(f.sf((chi2 / d1) / (100 / d2), d1, d2))
print(json.dumps(out))`, cases);
    ours.forEach((t, i) => {
      expect(t.method).toBe('variance-ratio');
      expect(Math.abs(t.pValue - reference[i])).toBeLessThan(1e-9);
    });
  });

  it("Hamilton's test for a part of a mixture against the mixture (b = 1 restriction), to 1e-9", () => {
    // Hamilton, Acta Cryst. 18, 502 (1965): F = (R0^2/R1^2 - 1)(n - m)/b with R = sqrt(R-factor)
    const mixture = scored('m', 0, stats(100, 6, 20, 0.010), null, ['a']);
    const part = scored('a', 1, stats(140, 5, 20, 0.014));
    const t = testAgainstBest(part, mixture);
    expect(t.method).toBe('hamilton');
    const p = runPython<number>('from scipy.stats import f; import json; print(json.dumps(f.sf((0.014 / 0.010 - 1) * 14 / 1, 1, 14)))');
    expect(Math.abs(t.pValue - p)).toBeLessThan(1e-9);
  });
});

describe('resolved shells and equivalence', () => {
  it('uses pi / (2 Dk) as the resolution (Stern, Phys. Rev. B 48, 9825 (1993))', () => {
    expect(distanceResolution([3, 14])).toBeCloseTo(Math.PI / 22, 12);
  });

  it('merges same-species shells closer than the resolution, n summed and r n-weighted', () => {
    const shells = [
      { scatterer: 'O', r: 1.97, degeneracy: 3 }, { scatterer: 'O', r: 2.03, degeneracy: 3 },
      { scatterer: 'O', r: 2.3, degeneracy: 2 }, { scatterer: 'N', r: 2.0, degeneracy: 1 },
    ];
    expect(resolvedShells(shells, 0.14)).toEqual([{ species: 'N', n: 1, r: 2.0 }, { species: 'O', n: 6, r: 2.0 }, { species: 'O', n: 2, r: 2.3 }]);
  });

  it('calls signatures equivalent only within the tolerances', () => {
    const a = [{ species: 'O', n: 6, r: 2.0 }];
    expect(equivalentSignatures(a, [{ species: 'O', n: 6, r: 2.009 }])).toBe(true);
    expect(equivalentSignatures(a, [{ species: 'O', n: 6, r: 2.02 }])).toBe(false);
    expect(equivalentSignatures(a, [{ species: 'O', n: 5, r: 2.0 }])).toBe(false);
    expect(equivalentSignatures(a, [{ species: 'N', n: 6, r: 2.0 }])).toBe(false);
  });
});

describe('rankCandidates', () => {
  it('orders by reduced chi-square, shares the rank of equivalents, words the verdicts', () => {
    const sig = [{ species: 'O', n: 6, r: 2.0 }];
    const ranked = rankCandidates([
      scored('worse', 0, stats(150, 5), [{ species: 'O', n: 4, r: 2.0 }]),
      scored('best', 1, stats(100, 5), sig),
      scored('twin', 2, stats(99.5 * 1.2, 5), sig),
      scored('failed', 3, null),
      scored('far', 4, stats(800, 5), [{ species: 'S', n: 6, r: 2.3 }]),
    ]);
    expect(ranked.map((r) => [r.key, r.rank, r.verdict])).toEqual([
      ['best', 1, 'best'],
      ['twin', 1, 'not distinguishable from the best'],
      ['worse', 3, 'not distinguishable from the best'],
      ['far', 4, 'rejected'],
      ['failed', 5, 'rejected'],
    ]);
    expect(ranked[1].equivalentTo).toBe('best');
    // F(15, 15) at 1.5 has p = 0.2208 > 0.05, at 8 p = 1.19e-4 < 0.001 (scipy.stats.f.sf, python3-scipy)
    expect(ranked[2].test!.pValue).toBeGreaterThan(0.05);
    expect(ranked[3].test!.pValue).toBeLessThan(0.001);
  });

  it("says 'worse at 95 %' between the two levels, with the level in the words", () => {
    // F(15, 15) at 2.6: p = 0.0369 (scipy.stats.f.sf): worse at 95 %, not at 99 %
    const ranked = rankCandidates([scored('b', 0, stats(100, 5)), scored('c', 1, stats(260, 5))], { alpha: 0.05, rejectAlpha: 0.001 });
    expect(ranked[1].verdict).toBe('worse at 95 %');
    const strict = rankCandidates([scored('b', 0, stats(100, 5)), scored('c', 1, stats(260, 5))], { alpha: 0.01, rejectAlpha: 0.0001 });
    expect(strict[1].verdict).toBe('not distinguishable from the best');
  });
});

describe('progress line and shards', () => {
  it('shows the bar, counts, rate and time left', () => {
    expect(formatProgress({ stage: 'prescreen', done: 50, total: 100, resumed: 0, elapsedMs: 1000 }, 80))
      .toBe(`prescreen [${'#'.repeat(20)}${'-'.repeat(20)}]  50/100  50.0/s  left 1s`);
    expect(formatDuration(3725)).toBe('1h02m');
    expect(formatDuration(185)).toBe('3m05s');
  });

  it('parses I/N and refuses shards that do not exist', () => {
    expect(parseShard('2/8')).toEqual({ index: 2, count: 8 });
    for (const bad of ['0/3', '4/3', '1', 'a/b']) expect(() => parseShard(bad)).toThrow(InputError);
  });
});
