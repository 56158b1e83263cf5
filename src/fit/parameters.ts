/**
 * Named fit parameters: each is free (varied by the fitter), fixed (a constant) or tied (an
 * expression of other parameters, see ./expressions), with optional bounds on free ones.
 *
 * {@link defineParameters} validates the set once: names, duplicates, values inside bounds,
 * expressions in the allowed language, unknown names, and the dependency order of tied
 * parameters (Kahn's topological sort, Kahn, Commun. ACM 5, 558 (1962)); a cycle is refused
 * with an InputError that names the parameters on it. The resulting {@link ParameterSet} maps the
 * vector of free values to the values of all parameters, gives the exact Jacobian of that map
 * (forward-mode differentiation of the expressions, for the chain rule in model Jacobians), and
 * propagates the covariance of the free parameters to all of them by the delta method:
 * Cov_all = G Cov_free G^T with G = d(all values)/d(free values) (first-order propagation of
 * errors, e.g. Bevington and Robinson, Data Reduction and Error Analysis for the Physical
 * Sciences, 3rd ed. (2003), eq. 3.13; equation number from memory).
 */
import { InputError, type InputLocation } from '../core/errors';
import { compileExpression, NAME_PATTERN, RESERVED_NAMES, type CompiledExpression } from './expressions';

/** free: varied by the fitter; fixed: held at its value; tied: computed from an expression. */
export type ParameterState = 'free' | 'fixed' | 'tied';

/** One parameter as the user (or a recipe) declares it. */
export interface ParameterSpec {
  /** Name, e.g. `s0sq`, `e0`, `r1`; letters, digits and underscores, not starting with a digit. */
  name: string;
  /** free or fixed: the (start) value. Ignored for tied parameters. */
  value?: number;
  /** Defaults to 'tied' when `expression` is given, else 'free'. */
  state?: ParameterState;
  /** For tied parameters: an expression of other parameters, e.g. `r1 + 0.1`. */
  expression?: string;
  /** Bounds of a free parameter (either or both; only free parameters may have bounds). */
  lower?: number;
  upper?: number;
  /** Where the parameter was declared, for error messages. */
  where?: InputLocation;
}

/** Value and error of one parameter after a fit. */
export interface ParameterEstimate {
  name: string;
  state: ParameterState;
  value: number;
  /** One standard deviation (0 for fixed; NaN when no covariance is available). */
  error: number;
}

/** A validated set of parameters. Immutable. */
export interface ParameterSet {
  /** All names in declaration order. */
  readonly names: readonly string[];
  readonly states: readonly ParameterState[];
  /** Names of the free parameters, in declaration order (the order of the free vector). */
  readonly freeNames: readonly string[];
  /** Index into `names` of each free parameter. */
  readonly freeIndices: Int32Array;
  /** Start values of the free parameters. */
  readonly initialFree: Float64Array;
  /** Bounds of the free parameters (-Infinity / Infinity where absent). */
  readonly lowerFree: Float64Array;
  readonly upperFree: Float64Array;
  /** Expression text of each parameter (undefined unless tied). */
  readonly expressions: readonly (string | undefined)[];
  /** Index of a name, or -1. */
  indexOf(name: string): number;
  /**
   * Values of all parameters for a vector of free values.
   * @param free length freeNames.length. @param out optional, length names.length.
   */
  values(free: ArrayLike<number>, out?: Float64Array): Float64Array;
  /**
   * d(value of parameter i)/d(free value j), row-major names.length x freeNames.length:
   * identity rows for free parameters, zero rows for fixed ones, exact derivatives for tied ones.
   */
  valueJacobian(free: ArrayLike<number>, out?: Float64Array): Float64Array;
  /**
   * Delta-method propagation: values, errors sqrt(diag(G C G^T)) and the full covariance of all
   * parameters, given the covariance C (free x free, row-major) of the free values.
   * A null covariance gives NaN errors for free and tied parameters.
   */
  propagate(free: ArrayLike<number>, covarianceFree: Float64Array | null): {
    estimates: ParameterEstimate[];
    covariance: Float64Array | null;
  };
}

interface Entry {
  name: string;
  state: ParameterState;
  value: number;
  lower: number;
  upper: number;
  expression?: CompiledExpression;
  /** Indices (into the set) of the expression's symbols. */
  symbolIndices?: Int32Array;
  where: InputLocation;
}

/**
 * Validate parameter declarations and build a {@link ParameterSet}.
 * @throws InputError naming the parameter (and its location when given) for: a bad or reserved
 *   name, a duplicate, a missing or non-finite value, bounds on a non-free parameter, lower >=
 *   upper, a start value outside its bounds, a refused expression, an unknown name in an
 *   expression, or a cycle of ties.
 */
export function defineParameters(specs: readonly ParameterSpec[]): ParameterSet {
  const entries: Entry[] = [];
  const index = new Map<string, number>();
  for (const spec of specs) {
    const where = spec.where ?? {};
    const name = spec.name;
    const fail = (why: string): never => {
      throw new InputError(`parameter "${name}": ${why}`, where);
    };
    if (typeof name !== 'string' || !NAME_PATTERN.test(name)) {
      throw new InputError(`parameter name "${String(name)}" must start with a letter or _ and contain only letters, digits and _`, where);
    }
    if (RESERVED_NAMES.has(name)) fail('this name is reserved (a function, constant or keyword of the expression language)');
    if (index.has(name)) fail('declared twice');
    const state: ParameterState = spec.state ?? (spec.expression !== undefined ? 'tied' : 'free');
    if (state !== 'free' && state !== 'fixed' && state !== 'tied') fail(`unknown state "${String(state)}" (free, fixed or tied)`);
    const lower = spec.lower ?? -Infinity;
    const upper = spec.upper ?? Infinity;
    if (state !== 'free' && (spec.lower !== undefined || spec.upper !== undefined)) fail(`only free parameters may have bounds (this one is ${state})`);
    if (Number.isNaN(lower) || Number.isNaN(upper)) fail('a bound is NaN');
    if (!(lower < upper)) fail(`lower bound ${lower} is not below upper bound ${upper}`);
    let value = NaN;
    if (state === 'tied') {
      if (spec.expression === undefined || spec.expression.trim() === '') fail('tied but has no expression');
    } else {
      if (spec.expression !== undefined) fail(`has an expression but is ${state} (use state 'tied')`);
      if (typeof spec.value !== 'number' || !Number.isFinite(spec.value)) fail(`needs a finite value, got ${String(spec.value)}`);
      value = spec.value as number;
      if (value < lower || value > upper) fail(`value ${value} lies outside its bounds [${lower}, ${upper}]`);
    }
    index.set(name, entries.length);
    entries.push({ name, state, value, lower, upper, where });
  }

  // Compile expressions now that all names are known.
  for (const e of entries) {
    if (e.state !== 'tied') continue;
    const spec = specs[index.get(e.name)!];
    const where: InputLocation = { ...e.where, key: e.where.key ?? e.name };
    e.expression = compileExpression(spec.expression!, where, (symbol) => index.has(symbol));
    e.symbolIndices = Int32Array.from(e.expression.symbols, (s) => index.get(s)!);
    if (e.expression.symbols.includes(e.name)) {
      throw new InputError(`parameter "${e.name}": expression "${spec.expression}" refers to itself`, e.where);
    }
  }

  const order = tiedOrder(entries);
  const n = entries.length;
  const freeIdx: number[] = [];
  entries.forEach((e, i) => {
    if (e.state === 'free') freeIdx.push(i);
  });
  const freeIndices = Int32Array.from(freeIdx);
  const nFree = freeIndices.length;
  const names = Object.freeze(entries.map((e) => e.name));
  const states = Object.freeze(entries.map((e) => e.state));

  const values = (free: ArrayLike<number>, out: Float64Array = new Float64Array(n)): Float64Array => {
    if (free.length !== nFree) throw new InputError(`expected ${nFree} free values, got ${free.length}`);
    for (let i = 0; i < n; i++) out[i] = entries[i].value;
    for (let j = 0; j < nFree; j++) out[freeIndices[j]] = free[j];
    const scratch: number[] = [];
    for (const i of order) {
      const e = entries[i];
      const sym = e.symbolIndices!;
      scratch.length = sym.length;
      for (let s = 0; s < sym.length; s++) scratch[s] = out[sym[s]];
      out[i] = e.expression!.value(scratch);
    }
    return out;
  };

  const valueJacobian = (free: ArrayLike<number>, out: Float64Array = new Float64Array(n * nFree)): Float64Array => {
    const v = values(free);
    out.fill(0, 0, n * nFree);
    for (let j = 0; j < nFree; j++) out[freeIndices[j] * nFree + j] = 1;
    const vals: number[] = [];
    const dirs: number[] = [];
    for (const i of order) {
      const e = entries[i];
      const sym = e.symbolIndices!;
      vals.length = sym.length;
      dirs.length = sym.length;
      for (let s = 0; s < sym.length; s++) vals[s] = v[sym[s]];
      for (let j = 0; j < nFree; j++) {
        let any = false;
        for (let s = 0; s < sym.length; s++) {
          dirs[s] = out[sym[s] * nFree + j];
          if (dirs[s] !== 0) any = true;
        }
        out[i * nFree + j] = any ? e.expression!.derivative(vals, dirs) : 0;
      }
    }
    return out;
  };

  const propagate = (free: ArrayLike<number>, covarianceFree: Float64Array | null) => {
    const v = values(free);
    let covariance: Float64Array | null = null;
    if (covarianceFree) {
      if (covarianceFree.length !== nFree * nFree) {
        throw new InputError(`covariance has ${covarianceFree.length} entries, expected ${nFree}^2`);
      }
      const g = valueJacobian(free);
      const gc = new Float64Array(n * nFree);
      for (let i = 0; i < n; i++) {
        for (let b = 0; b < nFree; b++) {
          let s = 0;
          for (let a = 0; a < nFree; a++) s += g[i * nFree + a] * covarianceFree[a * nFree + b];
          gc[i * nFree + b] = s;
        }
      }
      covariance = new Float64Array(n * n);
      for (let i = 0; i < n; i++) {
        for (let k = 0; k < n; k++) {
          let s = 0;
          for (let b = 0; b < nFree; b++) s += gc[i * nFree + b] * g[k * nFree + b];
          covariance[i * n + k] = s;
        }
      }
    }
    const estimates: ParameterEstimate[] = entries.map((e, i) => ({
      name: e.name,
      state: e.state,
      value: v[i],
      error: e.state === 'fixed' ? 0 : covariance ? Math.sqrt(Math.max(covariance[i * n + i], 0)) : NaN,
    }));
    return { estimates, covariance };
  };

  return Object.freeze({
    names,
    states,
    freeNames: Object.freeze(freeIdx.map((i) => entries[i].name)),
    freeIndices,
    initialFree: Float64Array.from(freeIdx, (i) => entries[i].value),
    lowerFree: Float64Array.from(freeIdx, (i) => entries[i].lower),
    upperFree: Float64Array.from(freeIdx, (i) => entries[i].upper),
    expressions: Object.freeze(entries.map((e) => e.expression?.text)),
    indexOf: (name: string) => index.get(name) ?? -1,
    values,
    valueJacobian,
    propagate,
  });
}

/** Evaluation order of the tied parameters (Kahn's algorithm); InputError naming a cycle. */
function tiedOrder(entries: Entry[]): number[] {
  const tied = entries.map((e, i) => (e.state === 'tied' ? i : -1)).filter((i) => i >= 0);
  const pending = new Map<number, number>(); // tied index -> number of tied inputs not yet ordered
  const users = new Map<number, number[]>(); // index -> tied parameters using it
  for (const i of tied) {
    let count = 0;
    for (const s of new Set(entries[i].symbolIndices!)) {
      if (entries[s].state === 'tied') {
        count++;
        if (!users.has(s)) users.set(s, []);
        users.get(s)!.push(i);
      }
    }
    pending.set(i, count);
  }
  const ready = tied.filter((i) => pending.get(i) === 0);
  const order: number[] = [];
  while (ready.length > 0) {
    const i = ready.shift()!;
    order.push(i);
    for (const u of users.get(i) ?? []) {
      const left = pending.get(u)! - 1;
      pending.set(u, left);
      if (left === 0) ready.push(u);
    }
  }
  if (order.length < tied.length) {
    const stuck = new Set(tied.filter((i) => !order.includes(i)));
    const cycle = findCycle(entries, stuck);
    const first = entries[cycle[0]];
    throw new InputError(
      `parameters tied in a cycle: ${[...cycle, cycle[0]].map((i) => entries[i].name).join(' -> ')}`,
      { ...first.where, key: first.where.key ?? first.name },
    );
  }
  return order;
}

/** One cycle among the stuck tied parameters, by walking dependencies until a repeat. */
function findCycle(entries: Entry[], stuck: Set<number>): number[] {
  let node = [...stuck][0];
  const seen = new Map<number, number>();
  const path: number[] = [];
  while (!seen.has(node)) {
    seen.set(node, path.length);
    path.push(node);
    node = [...entries[node].symbolIndices!].find((s) => stuck.has(s))!;
  }
  return path.slice(seen.get(node)!);
}

/** A model written in terms of all parameter values (free, fixed and tied alike). */
export interface ParameterModel {
  /** Number of residuals m. */
  nResiduals: number;
  /** Residuals for the values of all parameters (length names.length), written into `out`. */
  residuals(values: Float64Array, out: Float64Array): void;
  /**
   * Optional d residual_i / d value_k for all parameters, row-major m x names.length. Called right
   * after `residuals` at the same values.
   */
  jacobian?(values: Float64Array, out: Float64Array): void;
}

/**
 * The least-squares problem in the free parameters of `set` for a model written in all values:
 * residuals(free) = model.residuals(values(free)), and, when the model has a Jacobian, the chain
 * rule J_free = J_all G with G = {@link ParameterSet.valueJacobian}. The bounds and start values
 * are those of the free parameters. The returned object fits `fitLeastSquares`'s problem shape.
 */
export function parameterProblem(set: ParameterSet, model: ParameterModel) {
  const nAll = set.names.length;
  const nFree = set.freeNames.length;
  const m = model.nResiduals;
  const values = new Float64Array(nAll);
  const jacAll = model.jacobian ? new Float64Array(m * nAll) : null;
  const g = new Float64Array(nAll * nFree);
  return {
    nResiduals: m,
    initial: set.initialFree,
    lower: set.lowerFree,
    upper: set.upperFree,
    residuals(free: Float64Array, out: Float64Array): void {
      set.values(free, values);
      model.residuals(values, out);
    },
    jacobian: model.jacobian
      ? (free: Float64Array, out: Float64Array): void => {
          set.values(free, values);
          model.jacobian!(values, jacAll!);
          set.valueJacobian(free, g);
          out.fill(0, 0, m * nFree);
          for (let i = 0; i < m; i++) {
            const row = i * nAll;
            const outRow = i * nFree;
            for (let k = 0; k < nAll; k++) {
              const jik = jacAll![row + k];
              if (jik === 0) continue;
              const gk = k * nFree;
              for (let j = 0; j < nFree; j++) out[outRow + j] += jik * g[gk + j];
            }
          }
        }
      : undefined,
  };
}
