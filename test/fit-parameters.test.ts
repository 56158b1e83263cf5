import { describe, it, expect } from 'vitest';
import { defineParameters, type ParameterSpec } from '../src/fit/parameters';
import { seededRandom } from '../src/fit/random';
import { InputError } from '../src/core/errors';

const shells: ParameterSpec[] = [
  { name: 's0sq', value: 0.9, state: 'fixed' },
  { name: 'e0', value: 1.5, lower: -10, upper: 10 },
  { name: 'r1', value: 2.5 },
  { name: 'dr', value: 0.2 },
  { name: 'r2', expression: 'r1 + dr' },
  { name: 'r3', expression: 'r2 * r1 / 2' }, // depends on another tied parameter, declared after it
  { name: 'msrd2', expression: '2 * msrd1' }, // declared before the parameter it uses
  { name: 'msrd1', value: 0.004, lower: 0 },
];

describe('free, fixed and tied parameters', () => {
  const set = defineParameters(shells);

  it('orders free parameters as declared and keeps their bounds', () => {
    expect(set.freeNames).toEqual(['e0', 'r1', 'dr', 'msrd1']);
    expect([...set.initialFree]).toEqual([1.5, 2.5, 0.2, 0.004]);
    expect([...set.lowerFree]).toEqual([-10, -Infinity, -Infinity, 0]);
    expect([...set.upperFree]).toEqual([10, Infinity, Infinity, Infinity]);
  });

  it('maps free values to all values, resolving ties in dependency order', () => {
    const v = set.values([0.5, 2.0, 0.3, 0.01]);
    // Reference: the same arithmetic written out by hand.
    expect(v[set.indexOf('s0sq')]).toBe(0.9);
    expect(v[set.indexOf('r2')]).toBeCloseTo(2.3, 14);
    expect(v[set.indexOf('r3')]).toBeCloseTo((2.3 * 2.0) / 2, 14);
    expect(v[set.indexOf('msrd2')]).toBeCloseTo(0.02, 15);
  });

  it('gives the exact Jacobian of the map', () => {
    const free = [0.5, 2.0, 0.3, 0.01];
    const g = set.valueJacobian(free);
    const nf = 4;
    const row = (name: string) => [...g.subarray(set.indexOf(name) * nf, set.indexOf(name) * nf + nf)];
    expect(row('s0sq')).toEqual([0, 0, 0, 0]);
    expect(row('r1')).toEqual([0, 1, 0, 0]);
    expect(row('r2')).toEqual([0, 1, 1, 0]);
    // r3 = (r1 + dr) r1 / 2: d/dr1 = (2 r1 + dr)/2 = 2.15, d/ddr = r1/2 = 1.0 (hand calculus).
    const r3 = row('r3');
    expect(r3[1]).toBeCloseTo(2.15, 14);
    expect(r3[2]).toBeCloseTo(1.0, 14);
    expect(row('msrd2')).toEqual([0, 0, 0, 2]);
  });

  it('propagates errors by the delta method, matching a Monte Carlo estimate', () => {
    // Free covariance with a correlation between r1 and dr; r3 is nonlinear in them.
    const free = [0.5, 2.0, 0.3, 0.01];
    const cov = new Float64Array(16);
    const sd = [0.3, 0.01, 0.02, 0.001];
    for (let a = 0; a < 4; a++) cov[a * 4 + a] = sd[a] ** 2;
    cov[1 * 4 + 2] = cov[2 * 4 + 1] = -0.6 * sd[1] * sd[2];
    const { estimates } = set.propagate(free, cov);
    const byName = Object.fromEntries(estimates.map((e) => [e.name, e]));
    expect(byName.s0sq.error).toBe(0);
    expect(byName.r1.error).toBeCloseTo(0.01, 15);
    // r2 = r1 + dr: var = s1^2 + s2^2 + 2 c s1 s2 (exact for a linear tie).
    expect(byName.r2.error).toBeCloseTo(Math.sqrt(0.01 ** 2 + 0.02 ** 2 - 2 * 0.6 * 0.01 * 0.02), 14);
    expect(byName.msrd2.error).toBeCloseTo(0.002, 15);
    // r3 against 200000 seeded Gaussian draws: first-order propagation is accurate to O(sd^2),
    // here about 0.5 %; Monte Carlo sampling error of a sd is 1/sqrt(2N) = 0.16 %. Tolerance 2 %.
    const rng = seededRandom(99);
    let s = 0;
    let s2 = 0;
    const N = 200000;
    for (let i = 0; i < N; i++) {
      const z1 = rng.normal();
      const z2 = rng.normal();
      const r1 = 2.0 + sd[1] * z1;
      const dr = 0.3 + sd[2] * (-0.6 * z1 + Math.sqrt(1 - 0.36) * z2);
      const r3 = ((r1 + dr) * r1) / 2;
      s += r3;
      s2 += r3 * r3;
    }
    const mcSd = Math.sqrt(s2 / N - (s / N) ** 2);
    expect(Math.abs(byName.r3.error / mcSd - 1)).toBeLessThan(0.02);
  });

  it('gives NaN errors (not zero) when there is no covariance', () => {
    const { estimates } = set.propagate([0.5, 2.0, 0.3, 0.01], null);
    expect(estimates.find((e) => e.name === 'r2')!.error).toBeNaN();
    expect(estimates.find((e) => e.name === 's0sq')!.error).toBe(0);
  });
});

describe('invalid parameter sets are refused with an InputError naming the parameter', () => {
  const cases: [string, ParameterSpec[], RegExp][] = [
    ['a cycle of ties', [{ name: 'a', expression: 'b + 1' }, { name: 'b', expression: 'c * 2' }, { name: 'c', expression: 'a' }], /cycle: (a -> b -> c -> a|b -> c -> a -> b|c -> a -> b -> c)/],
    ['a tie to itself', [{ name: 'a', expression: 'a + 1' }], /"a".*refers to itself/],
    ['an unknown name', [{ name: 'r1', value: 1 }, { name: 'r2', expression: 'r1 + rr' }], /unknown parameter "rr"/],
    ['a duplicate', [{ name: 'r1', value: 1 }, { name: 'r1', value: 2 }], /"r1": declared twice/],
    ['a bad name', [{ name: '1r', value: 1 }], /parameter name "1r"/],
    ['a reserved name', [{ name: 'pi', value: 1 }], /"pi": this name is reserved/],
    ['a prototype name', [{ name: '__proto__', value: 1 }], /reserved/],
    ['a missing value', [{ name: 'n1' }], /"n1": needs a finite value/],
    ['a NaN value', [{ name: 'n1', value: NaN }], /"n1": needs a finite value/],
    ['a start outside its bounds', [{ name: 'msrd', value: -0.01, lower: 0 }], /"msrd": value -0.01 lies outside/],
    ['crossed bounds', [{ name: 'e0', value: 0, lower: 5, upper: -5 }], /"e0": lower bound 5 is not below/],
    ['bounds on a fixed parameter', [{ name: 's0sq', value: 0.9, state: 'fixed', lower: 0 }], /"s0sq": only free parameters may have bounds/],
    ['a tied parameter without expression', [{ name: 'r2', state: 'tied' }], /"r2": tied but has no expression/],
    ['an expression on a fixed parameter', [{ name: 'r2', state: 'fixed', value: 1, expression: '2' }], /"r2": has an expression/],
    ['a refused expression', [{ name: 'r1', value: 1 }, { name: 'r2', expression: 'evaluate(r1)' }], /r2.*expression "evaluate\(r1\)" refused/],
  ];
  for (const [what, specs, pattern] of cases) {
    it(`refuses ${what}`, () => {
      expect(() => defineParameters(specs)).toThrow(InputError);
      expect(() => defineParameters(specs)).toThrow(pattern);
    });
  }

  it('puts the file and line of the declaration into the message', () => {
    const specs: ParameterSpec[] = [{ name: 'r2', expression: 'r9', where: { file: 'cu.study.yaml', line: 12 } }];
    expect(() => defineParameters(specs)).toThrow(/^cu\.study\.yaml:12: r2: expression "r9" refused: unknown parameter "r9"/);
  });
});

describe('fitting through a parameter set', () => {
  it('a tied second shell recovers the same minimum as the hand-written two-parameter problem', async () => {
    const { fitLeastSquares } = await import('../src/fit/levenberg-marquardt');
    const { parameterProblem } = await import('../src/fit/parameters');
    // y = a exp(-t / tau) + a2 exp(-t / tau2) with a2 tied to a / 2 and tau2 fixed at 0.3.
    const rng = seededRandom(21);
    const t = Float64Array.from({ length: 50 }, (_, i) => 0.05 * i);
    const y = Float64Array.from(t, (ti) => 2 * Math.exp(-ti / 1.1) + 1 * Math.exp(-ti / 0.3) + 0.01 * rng.normal());
    const set = defineParameters([
      { name: 'a', value: 1 },
      { name: 'tau', value: 0.5, lower: 0.05, upper: 10 },
      { name: 'a2', expression: 'a / 2' },
      { name: 'tau2', value: 0.3, state: 'fixed' },
    ]);
    const model = {
      nResiduals: t.length,
      residuals(v: Float64Array, out: Float64Array) {
        for (let i = 0; i < t.length; i++) out[i] = v[0] * Math.exp(-t[i] / v[1]) + v[2] * Math.exp(-t[i] / v[3]) - y[i];
      },
      jacobian(v: Float64Array, out: Float64Array) {
        for (let i = 0; i < t.length; i++) {
          const e1 = Math.exp(-t[i] / v[1]);
          const e2 = Math.exp(-t[i] / v[3]);
          out.set([e1, (v[0] * e1 * t[i]) / (v[1] * v[1]), e2, (v[2] * e2 * t[i]) / (v[3] * v[3])], i * 4);
        }
      },
    };
    const viaSet = fitLeastSquares(parameterProblem(set, model), { ftol: 1e-14 });
    const direct = fitLeastSquares(
      {
        nResiduals: t.length,
        initial: [1, 0.5],
        residuals(p, out) {
          for (let i = 0; i < t.length; i++) out[i] = p[0] * Math.exp(-t[i] / p[1]) + (p[0] / 2) * Math.exp(-t[i] / 0.3) - y[i];
        },
      },
      { ftol: 1e-14, differences: 'central' },
    );
    // Tolerance 1e-7: same problem, analytic chain rule versus central differences.
    expect(viaSet.status).toBe('converged');
    expect(Math.abs(viaSet.params[0] - direct.params[0])).toBeLessThan(1e-7);
    expect(Math.abs(viaSet.params[1] - direct.params[1])).toBeLessThan(1e-7);
    const { estimates } = set.propagate(viaSet.params, viaSet.covariance);
    expect(estimates[2].value).toBeCloseTo(viaSet.params[0] / 2, 14);
    expect(estimates[2].error).toBeCloseTo(estimates[0].error / 2, 12);
  });
});
