/**
 * Arithmetic expressions for tied fit parameters, e.g. `r1 + 0.5 * (r2 - r1)` or `sqrt(msrd1) * 2`.
 *
 * Parsed with the mathjs parser (its `parse` only builds a node tree; nothing is evaluated), then
 * the tree is walked and everything outside a small whitelist is refused with an InputError that
 * names the expression:
 *   - numbers (finite decimal constants), parameter names, the constants `pi` and `e`;
 *   - binary + - * / ^ (and implicit multiplication, as in `2 pi`), unary minus and plus;
 *   - parentheses;
 *   - the functions listed in {@link ALLOWED_FUNCTIONS}, with their arities.
 * Everything else (assignment, function definition, property or index access, matrices, objects,
 * strings, ranges, conditionals, relational/logical/bitwise operators, blocks, units, and every
 * other function name such as import, evaluate, parse, createUnit, simplify, derivative, config)
 * is refused. The accepted tree is compiled into plain JavaScript closures of our own (no mathjs at
 * evaluation time, no `eval`/`Function`), which give the value and, by forward-mode
 * differentiation, the derivative along any direction of the parameters (chain rule; derivative
 * rules as in Abramowitz and Stegun, Handbook of Mathematical Functions (1964), 4.1-4.6).
 */
import { parse, type MathNode } from 'mathjs';
import { InputError, type InputLocation } from '../core/errors';

/** Longest expression text accepted, in characters. */
export const MAX_EXPRESSION_LENGTH = 500;
/** Deepest node nesting accepted (protects the recursive compiler and the stack). */
export const MAX_EXPRESSION_DEPTH = 40;

/** Function name -> [minimum, maximum] number of arguments. */
export const ALLOWED_FUNCTIONS: Readonly<Record<string, readonly [number, number]>> = Object.freeze({
  sqrt: [1, 1],
  cbrt: [1, 1],
  exp: [1, 1],
  log: [1, 1],
  log10: [1, 1],
  sin: [1, 1],
  cos: [1, 1],
  tan: [1, 1],
  asin: [1, 1],
  acos: [1, 1],
  atan: [1, 1],
  atan2: [2, 2],
  sinh: [1, 1],
  cosh: [1, 1],
  tanh: [1, 1],
  abs: [1, 1],
  min: [1, 16],
  max: [1, 16],
  hypot: [1, 16],
});

/** Named constants usable in expressions. */
export const ALLOWED_CONSTANTS: Readonly<Record<string, number>> = Object.freeze({ pi: Math.PI, e: Math.E });

/** Words that cannot name a parameter: functions, constants and mathjs operator keywords. */
export const RESERVED_NAMES: ReadonlySet<string> = new Set([
  ...Object.keys(ALLOWED_FUNCTIONS),
  ...Object.keys(ALLOWED_CONSTANTS),
  'mod', 'to', 'in', 'and', 'or', 'xor', 'not', 'end', 'true', 'false', 'null', 'undefined', 'NaN', 'Infinity',
  'constructor', 'prototype', '__proto__',
]);

/** A valid parameter name: a letter or underscore, then letters, digits, underscores. */
export const NAME_PATTERN = /^[A-Za-z_][A-Za-z0-9_]*$/;

const BINARY: Readonly<Record<string, string>> = { add: '+', subtract: '-', multiply: '*', divide: '/', pow: '^' };
const UNARY: Readonly<Record<string, string>> = { unaryMinus: '-', unaryPlus: '+' };

/**
 * Value and directional derivative of an expression. `values[i]` is the value of symbol i of the
 * expression's `symbols`, `directions[i]` its derivative along the chosen direction.
 */
export type ValueFunction = (values: ArrayLike<number>) => number;
export type DerivativeFunction = (values: ArrayLike<number>, directions: ArrayLike<number>) => number;

/** A checked, compiled expression. */
export interface CompiledExpression {
  /** The text as given. */
  readonly text: string;
  /** Names of the parameters it uses, each once, in order of first appearance. */
  readonly symbols: readonly string[];
  /** Value given the symbol values (in the order of `symbols`). */
  readonly value: ValueFunction;
  /** Derivative along `directions` (d symbol_i / dt), in the order of `symbols`. */
  readonly derivative: DerivativeFunction;
}

interface Compiled {
  value: ValueFunction;
  derivative: DerivativeFunction;
}

/** Own-property lookup that never reaches Object.prototype. */
function own<T>(table: Readonly<Record<string, T>>, key: string): T | undefined {
  return Object.prototype.hasOwnProperty.call(table, key) ? table[key] : undefined;
}

/**
 * Parse, check and compile an expression.
 *
 * @param text the expression, e.g. `2 * r1 - r0`.
 * @param where where it came from (file, line, key), used in error messages.
 * @param isKnownName optional check that a symbol is a parameter; unknown names are refused.
 * @throws InputError naming the expression for anything outside the allowed language.
 */
export function compileExpression(
  text: string,
  where: InputLocation = {},
  isKnownName?: (name: string) => boolean,
): CompiledExpression {
  const refuse = (why: string): never => {
    throw new InputError(`expression "${text}" refused: ${why}`, where);
  };
  if (typeof text !== 'string') refuse('not a string');
  if (text.trim() === '') refuse('empty expression');
  if (text.length > MAX_EXPRESSION_LENGTH) refuse(`longer than ${MAX_EXPRESSION_LENGTH} characters`);
  // Quotes and a few characters have no use in arithmetic; refusing them early gives clearer messages.
  const bad = /["'`;\[\]{}=$@#\\?:!<>&|~]/.exec(text);
  if (bad) refuse(`character "${bad[0]}" is not allowed (only numbers, parameter names, + - * / ^, parentheses and functions)`);
  // Nesting depth by parentheses, before the recursive parser sees it.
  let depth = 0;
  for (const ch of text) {
    if (ch === '(') depth++;
    else if (ch === ')') depth--;
    if (depth > MAX_EXPRESSION_DEPTH) refuse(`nested deeper than ${MAX_EXPRESSION_DEPTH} levels`);
  }
  let root: MathNode;
  try {
    root = parse(text);
  } catch (error) {
    return refuse(`cannot be parsed (${error instanceof Error ? error.message : String(error)})`);
  }
  const symbols: string[] = [];
  const symbolIndex = new Map<string, number>();

  const walk = (node: MathNode, level: number): Compiled => {
    if (level > MAX_EXPRESSION_DEPTH) refuse(`nested deeper than ${MAX_EXPRESSION_DEPTH} levels`);
    switch (node.type) {
      case 'ConstantNode': {
        const v = (node as unknown as { value: unknown }).value;
        if (typeof v !== 'number') refuse(`constant of type ${typeof v} (only numbers are allowed)`);
        const c = v as number;
        if (!Number.isFinite(c)) refuse(`constant ${String(c)} is not finite`);
        return { value: () => c, derivative: () => 0 };
      }
      case 'SymbolNode': {
        const name = (node as unknown as { name: string }).name;
        const constant = own(ALLOWED_CONSTANTS, name);
        if (constant !== undefined) return { value: () => constant, derivative: () => 0 };
        if (own(ALLOWED_FUNCTIONS, name) !== undefined) refuse(`function "${name}" used without arguments`);
        if (!NAME_PATTERN.test(name) || RESERVED_NAMES.has(name)) refuse(`"${name}" is not a parameter name`);
        if (isKnownName && !isKnownName(name)) refuse(`unknown parameter "${name}"`);
        let index = symbolIndex.get(name);
        if (index === undefined) {
          index = symbols.length;
          symbols.push(name);
          symbolIndex.set(name, index);
        }
        const i = index;
        return { value: (v) => v[i], derivative: (_v, d) => d[i] };
      }
      case 'ParenthesisNode':
        return walk((node as unknown as { content: MathNode }).content, level + 1);
      case 'OperatorNode': {
        const op = node as unknown as { fn: string; op: string; args: MathNode[] };
        const fn = String(op.fn);
        if (own(BINARY, fn) !== undefined && op.args.length === 2) {
          return binary(fn, walk(op.args[0], level + 1), walk(op.args[1], level + 1));
        }
        if (own(UNARY, fn) !== undefined && op.args.length === 1) {
          const a = walk(op.args[0], level + 1);
          if (fn === 'unaryPlus') return a;
          return { value: (v) => -a.value(v), derivative: (v, d) => -a.derivative(v, d) };
        }
        return refuse(`operator "${op.op}" is not allowed (only + - * / ^ and unary minus)`);
      }
      case 'FunctionNode': {
        const call = node as unknown as { fn: MathNode; args: MathNode[] };
        if (call.fn.type !== 'SymbolNode') refuse('only named functions may be called');
        const name = (call.fn as unknown as { name: string }).name;
        const arity = own(ALLOWED_FUNCTIONS, name);
        if (arity === undefined) refuse(`function "${name}" is not allowed (allowed: ${Object.keys(ALLOWED_FUNCTIONS).join(', ')})`);
        const [lo, hi] = arity!;
        if (call.args.length < lo || call.args.length > hi) {
          refuse(`function "${name}" takes ${lo === hi ? lo : `${lo} to ${hi}`} argument${hi === 1 ? '' : 's'}, got ${call.args.length}`);
        }
        return callFunction(name, call.args.map((a) => walk(a, level + 1)));
      }
      default:
        return refuse(`${describeNode(node.type)} is not allowed`);
    }
  };

  const compiled = walk(root, 0);
  return Object.freeze({ text, symbols: Object.freeze(symbols), value: compiled.value, derivative: compiled.derivative });
}

function describeNode(type: string): string {
  const names: Record<string, string> = {
    AccessorNode: 'property or index access',
    ArrayNode: 'a matrix or array',
    AssignmentNode: 'assignment',
    BlockNode: 'a block of several statements',
    ConditionalNode: 'a conditional (a ? b : c)',
    FunctionAssignmentNode: 'a function definition',
    IndexNode: 'indexing',
    ObjectNode: 'an object',
    RangeNode: 'a range',
    RelationalNode: 'a comparison',
  };
  return own(names, type) ?? `node type ${type}`;
}

function binary(fn: string, a: Compiled, b: Compiled): Compiled {
  switch (fn) {
    case 'add':
      return { value: (v) => a.value(v) + b.value(v), derivative: (v, d) => a.derivative(v, d) + b.derivative(v, d) };
    case 'subtract':
      return { value: (v) => a.value(v) - b.value(v), derivative: (v, d) => a.derivative(v, d) - b.derivative(v, d) };
    case 'multiply':
      return {
        value: (v) => a.value(v) * b.value(v),
        derivative: (v, d) => a.derivative(v, d) * b.value(v) + a.value(v) * b.derivative(v, d),
      };
    case 'divide':
      return {
        value: (v) => a.value(v) / b.value(v),
        derivative: (v, d) => {
          const bv = b.value(v);
          return (a.derivative(v, d) * bv - a.value(v) * b.derivative(v, d)) / (bv * bv);
        },
      };
    default:
      // pow: d(a^b) = b a^(b-1) da + a^b ln(a) db; the second term only when b varies.
      return {
        value: (v) => a.value(v) ** b.value(v),
        derivative: (v, d) => {
          const av = a.value(v);
          const bv = b.value(v);
          const db = b.derivative(v, d);
          const da = a.derivative(v, d);
          let out = da === 0 ? 0 : bv * av ** (bv - 1) * da;
          if (db !== 0) out += av ** bv * Math.log(av) * db;
          return out;
        },
      };
  }
}

/** Value and derivative (given the argument values x and derivatives dx) of an allowed function. */
function callFunction(name: string, args: Compiled[]): Compiled {
  const a = args[0];
  const unary = (f: (x: number) => number, df: (x: number) => number): Compiled => ({
    value: (v) => f(a.value(v)),
    derivative: (v, d) => {
      const da = a.derivative(v, d);
      return da === 0 ? 0 : df(a.value(v)) * da;
    },
  });
  switch (name) {
    case 'sqrt':
      return unary(Math.sqrt, (x) => 0.5 / Math.sqrt(x));
    case 'cbrt':
      return unary(Math.cbrt, (x) => 1 / (3 * Math.cbrt(x) ** 2));
    case 'exp':
      return unary(Math.exp, Math.exp);
    case 'log':
      return unary(Math.log, (x) => 1 / x);
    case 'log10':
      return unary(Math.log10, (x) => 1 / (x * Math.LN10));
    case 'sin':
      return unary(Math.sin, Math.cos);
    case 'cos':
      return unary(Math.cos, (x) => -Math.sin(x));
    case 'tan':
      return unary(Math.tan, (x) => 1 / Math.cos(x) ** 2);
    case 'asin':
      return unary(Math.asin, (x) => 1 / Math.sqrt(1 - x * x));
    case 'acos':
      return unary(Math.acos, (x) => -1 / Math.sqrt(1 - x * x));
    case 'atan':
      return unary(Math.atan, (x) => 1 / (1 + x * x));
    case 'sinh':
      return unary(Math.sinh, Math.cosh);
    case 'cosh':
      return unary(Math.cosh, Math.sinh);
    case 'tanh':
      return unary(Math.tanh, (x) => 1 / Math.cosh(x) ** 2);
    case 'abs':
      return unary(Math.abs, (x) => Math.sign(x));
    case 'atan2': {
      const [y, x] = args;
      return {
        value: (v) => Math.atan2(y.value(v), x.value(v)),
        derivative: (v, d) => {
          const yv = y.value(v);
          const xv = x.value(v);
          return (xv * y.derivative(v, d) - yv * x.derivative(v, d)) / (xv * xv + yv * yv);
        },
      };
    }
    case 'hypot':
      return {
        value: (v) => Math.hypot(...args.map((c) => c.value(v))),
        derivative: (v, d) => {
          const xs = args.map((c) => c.value(v));
          const h = Math.hypot(...xs);
          let s = 0;
          for (let i = 0; i < args.length; i++) s += xs[i] * args[i].derivative(v, d);
          return s / h;
        },
      };
    default: {
      // min / max: derivative of the selected argument (first one on ties).
      const pick = name === 'min' ? (x: number, y: number) => x < y : (x: number, y: number) => x > y;
      const select = (v: ArrayLike<number>): number => {
        let best = 0;
        let bestValue = args[0].value(v);
        for (let i = 1; i < args.length; i++) {
          const x = args[i].value(v);
          if (pick(x, bestValue) || Number.isNaN(x)) {
            best = i;
            bestValue = x;
          }
        }
        return best;
      };
      return {
        value: (v) => args[select(v)].value(v),
        derivative: (v, d) => args[select(v)].derivative(v, d),
      };
    }
  }
}
