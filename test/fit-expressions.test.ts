import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { compileExpression, MAX_EXPRESSION_DEPTH } from '../src/fit/expressions';
import { InputError } from '../src/core/errors';

const known = (name: string) => ['r1', 'r2', 'msrd1', 's0sq', 'x'].includes(name);

/** Evaluate with named values. */
function evaluate(text: string, values: Record<string, number>): number {
  const c = compileExpression(text, {}, known);
  return c.value(c.symbols.map((s) => values[s]));
}

describe('allowed expressions compute what JavaScript computes', () => {
  // Reference: the same formula written directly in JavaScript (IEEE 754 double arithmetic).
  const v = { r1: 2.5, r2: 3.1, msrd1: 0.004, s0sq: 0.9, x: 0.3 };
  const cases: [string, number][] = [
    ['r1 + 0.5 * (r2 - r1)', 2.5 + 0.5 * (3.1 - 2.5)],
    ['-r1 ^ 2', -(2.5 ** 2)], // mathjs precedence: unary minus binds looser than ^
    ['2 ^ 3 ^ 2', 2 ** (3 ** 2)], // right associative
    ['sqrt(msrd1) * 2', Math.sqrt(0.004) * 2],
    ['exp(-2 * x) + log(r2) - log10(100)', Math.exp(-0.6) + Math.log(3.1) - 2],
    ['sin(x) * cos(x) / tan(x)', (Math.sin(0.3) * Math.cos(0.3)) / Math.tan(0.3)],
    ['abs(r1 - r2) + min(r1, r2, 1) + max(s0sq, x)', Math.abs(2.5 - 3.1) + 1 + 0.9],
    ['2 pi r1', 2 * Math.PI * 2.5],
    ['e ^ x', Math.E ** 0.3],
    ['atan2(r1, r2) + hypot(r1, r2) + cbrt(8) + sinh(x) + cosh(x) + tanh(x)', Math.atan2(2.5, 3.1) + Math.hypot(2.5, 3.1) + 2 + Math.sinh(0.3) + Math.cosh(0.3) + Math.tanh(0.3)],
    ['asin(x) + acos(x) + atan(x)', Math.asin(0.3) + Math.acos(0.3) + Math.atan(0.3)],
    ['+r1 - -r2', 2.5 + 3.1],
    ['1.5e-3 * s0sq', 1.5e-3 * 0.9],
  ];
  for (const [text, expected] of cases) {
    it(`${text}`, () => {
      expect(evaluate(text, v)).toBeCloseTo(expected, 13); // tolerance 1e-13
    });
  }

  it('lists each parameter once, in order of appearance', () => {
    expect(compileExpression('r2 * r1 + r2').symbols).toEqual(['r2', 'r1']);
  });

  it('derivatives agree with central differences of the value', () => {
    // Tolerance 1e-7 relative: central difference with h = 1e-5 has error O(h^2 f''').
    const texts = ['r1 * r2 ^ 2 / sqrt(x)', 'exp(-2 * x * r1) * sin(2 * r2 * x + 0.3)', 'hypot(r1, r2) + atan2(x, r1) + r1 ^ x'];
    for (const text of texts) {
      const c = compileExpression(text);
      const vals = c.symbols.map((_, i) => 0.7 + 0.4 * i);
      for (let j = 0; j < vals.length; j++) {
        const dir = vals.map((_, i) => (i === j ? 1 : 0));
        const h = 1e-5;
        const plus = [...vals];
        const minus = [...vals];
        plus[j] += h;
        minus[j] -= h;
        const numeric = (c.value(plus) - c.value(minus)) / (2 * h);
        expect(Math.abs(c.derivative(vals, dir) - numeric)).toBeLessThan(1e-7 * Math.max(1, Math.abs(numeric)));
      }
    }
  });
});

describe('the expression sandbox refuses everything else with an InputError naming the expression', () => {
  // Known ways out of a mathjs sandbox: reaching Function through constructor chains, defining
  // or overriding functions, calling the parser/evaluator recursively, creating units, changing
  // the configuration, or code hidden in strings. All must be refused before anything runs.
  const attacks: string[] = [
    'constructor',
    'r1.constructor',
    'sin.constructor("return process")()',
    'r1["constructor"]',
    '__proto__',
    'r1.__proto__',
    'prototype',
    'x.prototype.polluted = 1',
    '[].map.constructor("return process")()',
    '[1, 2, 3]',
    '[r1; r2]',
    'f(x) = x + 1',
    'r1 = 3',
    'import({evil: 1}, {override: true})',
    'import(r1, r2)',
    'evaluate("1 + 1")',
    'evaluate(r1)',
    'parse(r1)',
    'compile(r1)',
    'simplify(r1)',
    'derivative(r1, x)',
    'createUnit(r1)',
    'createUnit("foo")',
    'config({number: "BigNumber"})',
    'config(r1)',
    'chain(r1)',
    'help(sin)',
    'typed(r1)',
    'reviver(r1)',
    'Function(r1)',
    'eval(r1)',
    'require(r1)',
    'process',
    '"1 + 1"',
    "'process.exit()'",
    'r1 ? r2 : x',
    '1:10',
    '{a: r1}',
    'r1; r2',
    'r1 < r2',
    'r1 == r2',
    'r1 and r2',
    'not r1',
    'r1 mod 2',
    'r1!',
    "r1'",
    '5 cm',
    '2 inch + r1',
    'r1 & r2',
    'r1 | r2',
    '~r1',
    'r1 to cm',
    'sqrt(r1, r2)',
    'sqrt()',
    'log(r1, 2)',
    'unknownfn(r1)',
    'r1(2)',
    'sin',
    'nope + r1',
    '1e400 * r1',
    'Infinity',
    'NaN',
    'i * r1',
    '',
    '   ',
    `${'('.repeat(MAX_EXPRESSION_DEPTH + 5)}r1${')'.repeat(MAX_EXPRESSION_DEPTH + 5)}`,
    `${'-'.repeat(200)}r1`,
    `r1${' + r1'.repeat(200)}`,
    `2${' ^ 2'.repeat(60)}`,
  ];
  for (const text of attacks) {
    it(`refuses ${JSON.stringify(text.length > 60 ? `${text.slice(0, 57)}...` : text)}`, () => {
      let thrown: unknown;
      try {
        compileExpression(text, { key: 'shell1.r' }, known);
      } catch (error) {
        thrown = error;
      }
      expect(thrown).toBeInstanceOf(InputError);
      const message = (thrown as InputError).message;
      expect(message).toContain('shell1.r');
      expect(message).toContain('refused');
    });
  }

  it('leaves Object.prototype and the global scope untouched by all of the above', () => {
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    expect((globalThis as Record<string, unknown>).evil).toBeUndefined();
  });

  it('huge but legal exponents evaluate to Infinity instead of hanging or throwing', () => {
    const c = compileExpression('10 ^ (10 ^ r1)');
    expect(c.value([400])).toBe(Infinity);
  });

  it('never throws anything but InputError on random text (fast-check)', () => {
    const alphabet = 'r1x2 +-*/^().,eE"\'[]{};:=<>!?&|~abc_$\\'.split('');
    fc.assert(
      fc.property(fc.array(fc.constantFrom(...alphabet), { maxLength: 40 }), (chars) => {
        const text = chars.join('');
        try {
          const c = compileExpression(text, { file: 'study.yaml', line: 3 }, known);
          // Whatever is accepted evaluates to a number without throwing.
          expect(typeof c.value(c.symbols.map(() => 1.5))).toBe('number');
        } catch (error) {
          expect(error).toBeInstanceOf(InputError);
          expect((error as InputError).message).toContain('study.yaml:3');
        }
      }),
      { seed: 20240501, numRuns: 2000 },
    );
  });
});
