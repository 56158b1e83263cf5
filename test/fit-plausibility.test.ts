/**
 * Plausibility warnings of a fit (src/fit/exafs/plausibility.ts): each check on constructed fit
 * results, at its threshold (no warning) and just past it (a warning), then end to end on the
 * measured Cu foil of test/data (test/data/SOURCE.md) against fcc Cu from test/fixtures, with
 * S0^2 fixed at an absurd 0.3. The thresholds themselves are common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
  BOUND_TOLERANCE, MAX_ABS_E0, MAX_RELATIVE_DISTANCE_SHIFT, MAX_S0SQ, MIN_S0SQ,
  plausibilityWarnings, type PlausibilityInput,
} from '../src/fit/exafs/plausibility';
import { cli, REPO } from './helpers/cli';

/** A fit that passes every check: Cu first shell at its crystal distance. */
function plausible(): PlausibilityInput {
  return {
    status: { converged: true, message: 'converged' },
    params: {
      s0sq: { value: 0.9, state: 'fixed' },
      e0: { value: 2, state: 'free', lower: -30, upper: 30 },
      r_Cu_1: { value: 2.55, state: 'free', lower: 2.05, upper: 3.05 },
    },
    shells: [{ dataset: 'data', id: 'Cu.1', r0: 2.5527, r: { value: 2.55 }, msrd: { value: 0.008 } }],
    datasets: [{ name: 'data', s0sq: 0.9, e0: 2 }],
  };
}

const codes = (input: PlausibilityInput) => plausibilityWarnings(input).map((w) => w.code);
const eps = 1e-9;

describe('plausibilityWarnings', () => {
  it('gives nothing for a plausible fit', () => {
    expect(plausibilityWarnings(plausible())).toEqual([]);
  });

  it('negative msrd: none at 0, a warning just below', () => {
    const at = plausible();
    at.shells = [{ ...at.shells[0], msrd: { value: 0 } }];
    expect(codes(at)).toEqual([]);
    const below = plausible();
    below.shells = [{ ...below.shells[0], msrd: { value: -1e-6 } }];
    const w = plausibilityWarnings(below);
    expect(w.map((x) => x.code)).toEqual(['negative-msrd']);
    expect(w[0]).toMatchObject({ shell: 'Cu.1', dataset: 'data', value: -1e-6, limit: 0 });
  });

  it('S0^2: none at 0.6 and 1.2, a warning just outside', () => {
    for (const s0sq of [MIN_S0SQ, MAX_S0SQ]) {
      const at = plausible();
      at.datasets = [{ name: 'data', s0sq, e0: 2 }];
      expect(codes(at)).toEqual([]);
    }
    for (const [s0sq, limit] of [[MIN_S0SQ - eps, MIN_S0SQ], [MAX_S0SQ + eps, MAX_S0SQ]]) {
      const out = plausible();
      out.datasets = [{ name: 'data', s0sq, e0: 2 }];
      const w = plausibilityWarnings(out);
      expect(w.map((x) => x.code)).toEqual(['s0sq-range']);
      expect(w[0]).toMatchObject({ parameter: 's0sq', value: s0sq, limit });
    }
    expect(MIN_S0SQ).toBe(0.6);
    expect(MAX_S0SQ).toBe(1.2);
  });

  it('|e0|: none at 10 eV either sign, a warning just above', () => {
    for (const e0 of [MAX_ABS_E0, -MAX_ABS_E0]) {
      const at = plausible();
      at.datasets = [{ name: 'data', s0sq: 0.9, e0 }];
      expect(codes(at)).toEqual([]);
      const out = plausible();
      out.datasets = [{ name: 'data', s0sq: 0.9, e0: e0 * (1 + 1e-9), e0Expression: 'dE' }];
      const w = plausibilityWarnings(out);
      expect(w.map((x) => x.code)).toEqual(['e0-range']);
      expect(w[0]).toMatchObject({ parameter: 'dE', limit: 10 });
    }
  });

  it('distance: none at 3 % from r0, a warning just past it, either direction', () => {
    const r0 = 2.5527;
    for (const sign of [1, -1]) {
      const at = plausible();
      at.shells = [{ ...at.shells[0], r: { value: r0 * (1 + sign * MAX_RELATIVE_DISTANCE_SHIFT * (1 - 1e-9)) } }];
      expect(codes(at)).toEqual([]);
      const out = plausible();
      out.shells = [{ ...out.shells[0], r: { value: r0 * (1 + sign * MAX_RELATIVE_DISTANCE_SHIFT * (1 + 1e-6)) } }];
      const w = plausibilityWarnings(out);
      expect(w.map((x) => x.code)).toEqual(['distance-shift']);
      expect(w[0].value).toBeCloseTo(0.03, 6);
      expect(w[0].shell).toBe('Cu.1');
    }
  });

  it('bounds: a free parameter within the tolerance of a bound warns, one just outside it does not', () => {
    const span = 60;
    const inside = plausible();
    inside.params = { ...inside.params, e0: { value: 30 - 0.5 * BOUND_TOLERANCE * span, state: 'free', lower: -30, upper: 30 } };
    const w = plausibilityWarnings(inside);
    expect(w.map((x) => x.code)).toEqual(['at-bound']);
    expect(w[0]).toMatchObject({ parameter: 'e0', limit: 30 });
    expect(w[0].message).toMatch(/upper bound/);
    const lower = plausible();
    lower.params = { ...lower.params, e0: { value: -30, state: 'free', lower: -30, upper: 30 } };
    expect(plausibilityWarnings(lower)[0].message).toMatch(/lower bound/);
    const outside = plausible();
    outside.params = { ...outside.params, e0: { value: 30 - 2 * BOUND_TOLERANCE * span, state: 'free', lower: -30, upper: 30 } };
    expect(codes(outside)).toEqual([]);
    // a fixed parameter is where the user put it, not where the data pushed it
    const fixed = plausible();
    fixed.params = { ...fixed.params, e0: { value: 30, state: 'fixed', lower: -30, upper: 30 } };
    expect(codes(fixed)).toEqual([]);
  });

  it('a fit that did not converge', () => {
    const bad = plausible();
    bad.status = { converged: false, message: 'iteration limit reached' };
    const w = plausibilityWarnings(bad);
    expect(w.map((x) => x.code)).toEqual(['not-converged']);
    expect(w[0].message).toMatch(/iteration limit reached/);
  });

  it('names the data set when there are several', () => {
    const two = plausible();
    two.datasets = [{ name: 'a', s0sq: 0.9, e0: 2 }, { name: 'b', s0sq: 0.3, e0: 2 }];
    const w = plausibilityWarnings(two);
    expect(w).toHaveLength(1);
    expect(w[0]).toMatchObject({ code: 's0sq-range', dataset: 'b' });
    expect(w[0].message).toMatch(/in data set b/);
  });
});

describe('plausibility warnings end to end (measured Cu foil, S0^2 fixed at 0.3)', () => {
  const cuData = join(REPO, 'test/data/cu_metal_rt.xdi');
  const cuP1 = join(REPO, 'test/fixtures/structures/cu-p1.cif');
  const args = ['fit', cuData, cuP1, '--absorber', 'Cu', '--r', '1.5:3'];

  it('JSON plausibility, text and report carry the S0^2 warning; S0^2 0.9 does not', async () => {
    const json = await cli([...args, '--s0sq', '0.3', '--json']);
    expect(json.code, json.stderr).toBe(0);
    const doc = JSON.parse(json.stdout);
    const s0sq = doc.plausibility.filter((w: { code: string }) => w.code === 's0sq-range');
    expect(s0sq).toHaveLength(1);
    expect(s0sq[0]).toMatchObject({ parameter: 's0sq', value: 0.3, limit: 0.6 });
    expect(doc.warnings).toContain(s0sq[0].message);

    const dir = mkdtempSync(join(tmpdir(), 'shellrank-plausibility-'));
    try {
      const text = await cli([...args, '--s0sq', '0.3', '--report', dir]);
      expect(text.code, text.stderr).toBe(0);
      expect(text.stdout).toMatch(/warning: S0\^2 \(s0sq\) = 0\.300 is outside 0\.6-1\.2/);
      expect(readFileSync(join(dir, 'report.html'), 'utf8')).toMatch(/S0\^2 \(s0sq\) = 0\.300 is outside 0\.6-1\.2/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }

    // the control: the customary S0^2 of a metal foil gives no S0^2 warning
    const control = await cli([...args, '--s0sq', '0.9', '--json']);
    expect(control.code, control.stderr).toBe(0);
    expect(JSON.parse(control.stdout).plausibility.filter((w: { code: string }) => w.code === 's0sq-range')).toEqual([]);
  }, 300_000);
});
