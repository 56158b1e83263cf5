/**
 * From a validated study to a refinement problem: load each data set's spectrum and structure,
 * build its shells, pick the shells each rule includes, expand the rule shorthands into
 * expressions of parameters, declare the per-shell parameters, and compile everything with
 * buildExafsProblem (src/fit/exafs/problem.ts). Nothing is fitted here.
 *
 * Shorthands (each written in a shell rule for one of n, r, msrd, c3, c4):
 * - `each` / `{each: {value, bounds, state, name, perDataset}}`: one parameter per shell, named
 *   PREFIX_<shell> (prefix = the quantity, `Cu.1` -> `Cu_1`, as the fit command's recipe); data
 *   sets that include a shell of the same id share it, unless `perDataset: true` makes one per
 *   data set (PREFIX_<shell>_<data set>). Value and bounds may use r0 and n0.
 * - `{expand: alpha}`: r = r0 (1 + alpha), one expansion factor for every shell of the rule.
 * - `{einstein: thetaE, static: s}`: the Einstein model of the pair's msrd at the data set's
 *   temperature T (Sevillano, Meuth and Rehr, Phys. Rev. B 20, 4908 (1979)):
 *     msrd = hbar^2 / (2 mu k_B thetaE) coth(thetaE / 2T) [+ s]
 *          = (24.254 / mu) / thetaE / tanh(thetaE / (2 T))  [Å^2, mu in amu, temperatures in K],
 *   with hbar^2 / (k_B amu) = 48.508 Å^2 K from CODATA 2018 (src/core/constants.ts).
 * - Defaults of a rule: n = n0 (the structure's degeneracy, fixed), r = each, msrd = each,
 *   c3 = 0, c4 = 0; a data set without rules gets the fit command's recipe: every shell with
 *   r0 <= Rmax + 0.5 Å under those defaults, `s0sq` fixed at 0.9 and `e0` free (when the study
 *   does not declare them), so the simplest study reproduces `shellrank fit`.
 */
import { resolve } from 'node:path';
import { InputError, type InputLocation } from '../../core/errors';
import { HBAR2_OVER_KB_AMU_A2_K } from '../../core/constants';
import type { InputRecord } from '../../core/provenance';
import { readTextFile } from '../../core/files';
import { elementBySymbol, canonicalSymbol } from '../../elements/index';
import { reducedMass } from '../../model/disorder';
import { tablesForPaths } from '../../model/tables';
import { shellsOfStructure, type PathSet, type ScatteringPath } from '../../paths/index';
import { loadStructureFile, pickFrame } from '../../read/load-structure';
import { DEFAULT_PROVIDER } from '../../scatter/registry';
import { approximateTablesWarnings, type ProviderRegistry, type ScatteringProvider } from '../../scatter/provider';
import { parseAbsorberSelector } from '../../structure/cluster';
import { compileExpression, NAME_PATTERN } from '../expressions';
import { defineParameters, type ParameterSpec } from '../parameters';
import { loadChiOrReduce, type LoadedChi } from '../exafs/data';
import { absorberAndEdgeFromData } from '../exafs/absorber-from-data';
import { checkEdgeMatches } from '../exafs/fit-structure';
import { buildExafsProblem, type ExafsProblem, type FitDataset, type PathRule } from '../exafs/problem';
import { groupName } from '../exafs/recipe';
import { checkRankSection } from './rank-section';
import type { StudyDataset, StudyFile } from './load';
import type { EachInput, QuantityInput, ShellRuleInput } from './schema';
import { STUDY_SYMBOLS, substituteValues } from './symbols';
import { suggestion } from './validate';
import { formatKeyPath, type KeyPath } from './yaml-source';

export const QUANTITIES = ['n', 'r', 'msrd', 'c3', 'c4'] as const;
export type Quantity = (typeof QUANTITIES)[number];

/** Shells with r0 <= Rmax + this margin are included by `auto` (Å), as the fit command's recipe. */
export const AUTO_MARGIN = 0.5;

/** Value of a shell quantity when a rule does not give it. */
export const DEFAULT_QUANTITIES: Readonly<Record<Quantity, QuantityInput>> = { n: 'n0', r: 'each', msrd: 'each', c3: 0, c4: 0 };

/** Start values and bounds of `each` parameters (the fit command's recipe for r and msrd; common practice, no source). */
export const EACH_DEFAULTS: Readonly<Record<Quantity, { value: string; bounds: [string | null, string | null] }>> = {
  n: { value: 'n0', bounds: ['0', null] },
  r: { value: 'r0', bounds: ['r0 - 0.5', 'r0 + 0.5'] },
  msrd: { value: '0.005', bounds: ['-0.01', '0.1'] },
  c3: { value: '0', bounds: ['-0.01', '0.01'] },
  c4: { value: '0', bounds: ['-0.001', '0.001'] },
};

/** s0sq and e0 when used but not declared: the fit command's defaults. */
export const AUTO_PARAMETERS: Readonly<Record<'s0sq' | 'e0', Omit<ParameterSpec, 'name' | 'where'>>> = {
  s0sq: { value: 0.9, state: 'fixed' },
  e0: { value: 0, lower: -30, upper: 30 },
};

export interface PrepareOptions {
  providers: ProviderRegistry;
  /** Provider name overriding the study's `provider`. */
  provider?: string;
}

/** One included shell and the rule that covers it. */
export interface SelectedShell {
  path: ScatteringPath;
  /** Index of the rule in the data set's shells list, or -1 for the default recipe. */
  rule: number;
  /** Final expressions of n, r, msrd, c3, c4 (symbols substituted). */
  expressions: PathRule;
}

export interface PreparedDataset {
  settings: StudyDataset;
  data: LoadedChi;
  structure: { file: string; sha256: string; absorber: string; sites: number; frame: number };
  pathSet: PathSet;
  shells: SelectedShell[];
  fit: FitDataset;
}

/** A study ready to refine. */
export interface PreparedStudy {
  study: StudyFile;
  provider: ScatteringProvider;
  parameters: ParameterSpec[];
  /** Names of the per-shell parameters that `each` declared (a subset of parameters). */
  eachParameters: string[];
  datasets: PreparedDataset[];
  problem: ExafsProblem;
  /** What the rules expanded to, one line each (the `recipe` of the fit document). */
  description: string[];
  /** Remarks found while preparing (unused fixed parameters, ...). */
  warnings: string[];
  refine: { starts: number; seed: number; maxIterations: number };
  inputs: InputRecord[];
}

/** An InputError located in the study: keeps an error already located there, else moves it to `where`. */
export function relocate(error: unknown, where: InputLocation, studyFile: string): never {
  if (!(error instanceof InputError)) throw error;
  if (error.file === studyFile && error.line !== undefined) throw error;
  const inner = [
    error.file !== undefined ? (error.line !== undefined ? `${error.file}:${error.line}` : error.file) : undefined,
    error.key !== undefined && !error.key.startsWith('--') ? error.key : undefined,
  ].filter((x) => x !== undefined).join(': ');
  throw new InputError(inner ? `${inner}: ${error.reason}` : error.reason, where);
}

/** Run `f`, moving any InputError it raises to `where`. */
function at<T>(where: InputLocation, studyFile: string, f: () => T): T {
  try {
    return f();
  } catch (error) {
    return relocate(error, where, studyFile);
  }
}

/** S0^2 (or another parameter) from an earlier fit's JSON. */
function valueFromFit(path: string, parameter: string, where: InputLocation): number {
  const text = at(where, where.file ?? '', () => readTextFile(path));
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch {
    throw new InputError(`${path} is not a JSON fit result`, where);
  }
  const params = (doc as { params?: Record<string, { value?: unknown }> } | null)?.params;
  const entry = params && typeof params === 'object' && Object.prototype.hasOwnProperty.call(params, parameter) ? params[parameter] : undefined;
  const value = entry?.value;
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    const known = params && typeof params === 'object' ? Object.keys(params) : [];
    throw new InputError(`${path} has no params.${parameter}.value${suggestion(parameter, known)} (is it a shellrank fit result?)`, where);
  }
  return value;
}

/** Parameters declared under `parameters:`. */
function userParameters(study: StudyFile): ParameterSpec[] {
  const specs: ParameterSpec[] = [];
  for (const [name, decl] of Object.entries(study.input.parameters ?? {})) {
    const path: KeyPath = ['parameters', name];
    const where = study.where(path);
    if (!NAME_PATTERN.test(name)) throw new InputError(`'${name}' is not a parameter name: use letters, digits and _, starting with a letter or _`, where);
    if (STUDY_SYMBOLS.has(name)) throw new InputError(`'${name}' cannot name a parameter: the study gives it a meaning (${[...STUDY_SYMBOLS].join(', ')})`, where);
    if (typeof decl === 'number') {
      specs.push({ name, value: decl, state: 'fixed', where });
      continue;
    }
    if (typeof decl === 'string') {
      specs.push({ name, expression: decl, state: 'tied', where });
      continue;
    }
    let value = decl.value;
    if (decl.from !== undefined) {
      const fromWhere = study.where([...path, 'from']);
      if (decl.value !== undefined) throw new InputError('give value or from, not both', fromWhere);
      const file = typeof decl.from === 'string' ? decl.from : decl.from.file;
      const parameter = typeof decl.from === 'string' ? name : decl.from.parameter ?? name;
      value = valueFromFit(study.resolvePath(file), parameter, fromWhere);
    }
    const state = decl.state ?? (decl.expression !== undefined ? 'tied' : decl.from !== undefined ? 'fixed' : 'free');
    if (state !== 'tied' && value === undefined) throw new InputError(`a ${state} parameter needs a value (or from)`, where);
    const spec: ParameterSpec = { name, state, where };
    if (value !== undefined) spec.value = value;
    if (decl.expression !== undefined) spec.expression = decl.expression;
    if (decl.bounds) {
      if (decl.bounds[0] !== null) spec.lower = decl.bounds[0];
      if (decl.bounds[1] !== null) spec.upper = decl.bounds[1];
    }
    specs.push(spec);
  }
  return specs;
}

/** Text of a quantity as written, for the description. */
function describeQuantity(q: QuantityInput): string {
  if (typeof q === 'number') return String(q);
  if (typeof q === 'string') return q;
  if (q.each !== undefined) return `each${q.each.name ? ` (${q.each.name}_<shell>)` : ''}${q.each.perDataset ? ' per data set' : ''}`;
  if (q.expand !== undefined) return `r0 * (1 + ${q.expand})`;
  return `einstein(${q.einstein})${q.static !== undefined ? ` + ${q.static}` : ''}`;
}

interface LoadedDataset {
  settings: StudyDataset;
  data: LoadedChi;
  structure: PreparedDataset['structure'];
  pathSet: PathSet;
  /** Rules with their paths in the study (the default recipe has rule -1). */
  rules: { rule: ShellRuleInput; path: KeyPath }[];
  shells: { path: ScatteringPath; rule: number }[];
}

function loadDataset(study: StudyFile, d: StudyDataset): Omit<LoadedDataset, 'rules' | 'shells'> {
  const file = study.file;
  const data = at(study.where(d.origin('data')), file, () => loadChiOrReduce(d.data));
  const loaded = at(study.where(d.origin('structure')), file, () => loadStructureFile(d.structure, { format: d.format }));
  const structure = at(study.where(d.origin('frame')), file, () => pickFrame(loaded, d.frame));
  const absorberWhere = study.where(d.origin('absorber'));
  const given = at(absorberWhere, file, () => ({ absorber: d.absorber !== undefined ? parseAbsorberSelector(d.absorber) : undefined, edge: d.edge }));
  const clash = d.edge !== undefined && data.chi.edge !== null && d.edge !== data.chi.edge;
  const { absorber, edge } = at(study.where(d.origin(clash ? 'edge' : 'absorber')), file, () =>
    absorberAndEdgeFromData(data.chi, given, d.data, { absorber: 'absorber', edge: 'edge' }));
  const pathSet = at(absorberWhere, file, () =>
    shellsOfStructure(structure, { absorber, radius: d.radius, tolerance: d.tolerance, edge, structureHash: loaded.sha256 }));
  if (pathSet.paths.length === 0) throw new InputError(`the structure has no neighbour of the absorber within ${d.radius} Å`, absorberWhere);
  at(absorberWhere, file, () => checkEdgeMatches(data.chi, pathSet, d.data));
  // the data must cover the k range (the same test as buildExafsProblem, located in the study)
  const k = data.chi.k;
  const kWhere = study.where(d.origin('k'));
  if (d.kRange[1] > k[k.length - 1] + 2 * (k[1] - k[0]) + 1e-9) {
    throw new InputError(`the data end at k = ${k[k.length - 1].toFixed(2)} 1/Å, short of the k range ${d.kRange[0]}:${d.kRange[1]}`, kWhere);
  }
  if (d.kRange[0] < k[0]) throw new InputError(`the data start at k = ${k[0]} 1/Å, above the start of the k range ${d.kRange[0]}`, kWhere);
  return {
    settings: d,
    data,
    structure: { file: d.structure, sha256: loaded.sha256, absorber: pathSet.absorber, sites: pathSet.sites, frame: d.frame },
    pathSet,
  };
}

/** Shell ids a rule's include names (InputError for unknown ids, with a suggestion). */
function selectShells(study: StudyFile, pathSet: PathSet, d: StudyDataset, rule: ShellRuleInput, rulePath: KeyPath): ScatteringPath[] {
  const where = study.where([...rulePath, 'include']);
  const include = rule.include;
  const ids = pathSet.paths.map((p) => p.id);
  const listing = () => pathSet.paths.slice(0, 8).map((p) => `${p.id} (${p.r.toFixed(3)} Å)`).join(', ') + (pathSet.paths.length > 8 ? ', ...' : '');
  const byId = (id: string, index?: number): ScatteringPath => {
    const found = pathSet.paths.find((p) => p.id === id);
    if (!found) {
      const w = index === undefined ? where : study.where([...rulePath, 'include', index]);
      throw new InputError(`no shell '${id}' around ${pathSet.absorber} within ${d.radius} Å in ${d.structure}${suggestion(id, ids)}; the shells are ${listing()}`, w);
    }
    return found;
  };
  if (include === 'auto') {
    const limit = d.rRange[1] + AUTO_MARGIN;
    const chosen = pathSet.paths.filter((p) => p.r <= limit);
    if (chosen.length === 0) throw new InputError(`no shell lies within ${limit.toFixed(2)} Å of the absorber (R range ends at ${d.rRange[1]} Å); the shells are ${listing()}`, where);
    return chosen;
  }
  if (typeof include === 'string') return [byId(include)];
  if (Array.isArray(include)) {
    const seen = new Set<string>();
    return include.map((id, i) => {
      if (seen.has(id)) throw new InputError(`shell '${id}' is listed twice`, study.where([...rulePath, 'include', i]));
      seen.add(id);
      return byId(id, i);
    });
  }
  const species = include.species === undefined ? undefined : (Array.isArray(include.species) ? include.species : [include.species]).map((s) => {
    const symbol = canonicalSymbol(s);
    if (symbol === null) throw new InputError(`'${s}' is not an element symbol`, study.where([...rulePath, 'include', 'species']));
    return symbol;
  });
  const [lo, hi] = include.distance ?? [0, Infinity];
  const chosen = pathSet.paths.filter((p) => (species === undefined || species.includes(p.scatterer)) && p.r >= lo && p.r <= hi);
  if (chosen.length === 0) throw new InputError(`no shell matches (the shells are ${listing()})`, where);
  return chosen;
}

interface Pending {
  text: string;
  where: InputLocation;
  /** Values of r0, n0, mu, temperature for this shell (or data set). */
  values: Map<string, number>;
  assign(text: string): void;
}

/**
 * Prepare a study for refinement: load its inputs, expand its rules, compile the problem.
 * @throws InputError naming the study file, the line and the key for every problem found.
 */
export function prepareStudy(study: StudyFile, options: PrepareOptions): PreparedStudy {
  const file = study.file;
  checkRankSection(study);
  const providerName = options.provider ?? study.input.provider ?? DEFAULT_PROVIDER;
  const provider = at(options.provider === undefined && study.input.provider !== undefined ? study.where(['provider']) : { file, line: 1, key: 'provider' }, file, () => {
    try {
      return options.providers.get(providerName);
    } catch (error) {
      if (error instanceof InputError) throw new InputError(`${error.reason}${suggestion(providerName, options.providers.names())}`);
      throw error;
    }
  });

  const user = userParameters(study);
  const userNames = new Set(user.map((p) => p.name));
  const loaded: LoadedDataset[] = study.datasets.map((d) => {
    const base = loadDataset(study, d);
    const rules = d.shells === undefined
      ? [{ rule: { include: 'auto' } as ShellRuleInput, path: ['datasets', d.index] as KeyPath }]
      : d.shells.map((rule, j) => ({ rule, path: [...d.origin('shells'), j] as KeyPath }));
    const covered = new Map<string, number>();
    const shells: { path: ScatteringPath; rule: number }[] = [];
    rules.forEach(({ rule, path }, j) => {
      for (const p of selectShells(study, base.pathSet, d, rule, path)) {
        const before = covered.get(p.id);
        if (before !== undefined) {
          throw new InputError(`shell ${p.id} is already included by the rule at line ${study.where(rules[before].path).line}`, study.where([...path, 'include']));
        }
        covered.set(p.id, j);
        shells.push({ path: p, rule: d.shells === undefined ? -1 : j });
      }
    });
    const order = new Map(base.pathSet.paths.map((p, i) => [p.id, i]));
    shells.sort((a, b) => order.get(a.path.id)! - order.get(b.path.id)!);
    return { ...base, rules, shells };
  });

  // Pass 1: per-shell parameters (each) and the expressions still to check.
  const eachSpecs: ParameterSpec[] = [];
  const eachNames = new Map<string, InputLocation>();
  const pending: Pending[] = [];
  const prepared: { shells: SelectedShell[]; s0sq: string; e0: string }[] = [];
  for (const ds of loaded) {
    const d = ds.settings;
    const absorberWeight = elementBySymbol(ds.pathSet.absorber).weight;
    const datasetValues = new Map<string, number>();
    if (d.temperature !== undefined) datasetValues.set('temperature', d.temperature);
    const entry = { shells: [] as SelectedShell[], s0sq: d.s0sq, e0: d.e0 };
    prepared.push(entry);
    for (const key of ['s0sq', 'e0'] as const) {
      pending.push({ text: d[key], where: study.where(d.origin(key)), values: datasetValues, assign: (t) => void (entry[key] = t) });
    }
    for (const shell of ds.shells) {
      const p = shell.path;
      const { rule, path: rulePath } = ds.rules[Math.max(shell.rule, 0)];
      const mu = reducedMass(absorberWeight, elementBySymbol(p.scatterer).weight);
      const values = new Map(datasetValues);
      values.set('r0', p.r).set('n0', p.degeneracy).set('mu', mu);
      const selected: SelectedShell = { path: p, rule: shell.rule, expressions: { n: '', r: '', msrd: '', c3: '', c4: '' } };
      entry.shells.push(selected);
      for (const q of QUANTITIES) {
        const given = rule[q];
        const spec: QuantityInput = given ?? DEFAULT_QUANTITIES[q];
        const qPath: KeyPath = given === undefined ? [...rulePath] : [...rulePath, q];
        const where = study.where(qPath);
        const assign = (t: string) => void (selected.expressions[q] = t);
        if (typeof spec === 'number') {
          assign(String(spec));
          continue;
        }
        if (spec === 'each' || (typeof spec === 'object' && spec.each !== undefined)) {
          const each: EachInput = typeof spec === 'object' ? spec.each! : {};
          const name = `${each.name ?? q}_${groupName(p.id)}${each.perDataset ? `_${groupName(d.name)}` : ''}`;
          assign(name);
          if (eachNames.has(name)) continue; // shared with an earlier data set including the same shell
          if (userNames.has(name)) throw new InputError(`'each' would declare ${name}, which is already a parameter (give each.name a different prefix)`, where);
          const eachWhere = typeof spec === 'object' ? study.where([...qPath, 'each']) : where;
          eachNames.set(name, eachWhere);
          const shellOnly = (text: string | number, key: string): number => {
            if (typeof text === 'number') return text;
            const w = { ...eachWhere, key: `${eachWhere.key}.${key}` };
            const c = compileExpression(text, w, (s) => s === 'r0' || s === 'n0');
            const v = c.value(c.symbols.map((s) => values.get(s)!));
            if (!Number.isFinite(v)) throw new InputError(`'${text}' is not a finite number for shell ${p.id} (r0 = ${p.r}, n0 = ${p.degeneracy})`, w);
            return v;
          };
          const state = each.state ?? 'free';
          const decl: ParameterSpec = { name, state, value: shellOnly(each.value ?? EACH_DEFAULTS[q].value, 'value'), where: eachWhere };
          const bounds = each.bounds ?? (state === 'free' ? EACH_DEFAULTS[q].bounds : undefined);
          if (bounds) {
            if (bounds[0] !== null) decl.lower = shellOnly(bounds[0], 'bounds[0]');
            if (bounds[1] !== null) decl.upper = shellOnly(bounds[1], 'bounds[1]');
          }
          eachSpecs.push(decl);
          continue;
        }
        if (typeof spec === 'string') {
          pending.push({ text: spec, where, values, assign });
          continue;
        }
        if (spec.expand !== undefined) {
          if (q !== 'r') throw new InputError('expand applies to r only (r = r0 (1 + factor))', study.where([...qPath, 'expand']));
          const factor = String(spec.expand);
          pending.push({ text: factor, where: study.where([...qPath, 'expand']), values, assign: (t) => assign(`(${String(p.r)}) * (1 + (${t}))`) });
          continue;
        }
        // einstein
        const ew = study.where([...qPath, 'einstein']);
        if (q !== 'msrd') throw new InputError('einstein applies to msrd only', ew);
        if (d.temperature === undefined) throw new InputError(`the Einstein model needs the sample temperature: add 'temperature: K' to ${formatKeyPath(['datasets', d.index])} or to defaults`, ew);
        const zeroPointOverTheta = HBAR2_OVER_KB_AMU_A2_K / (2 * mu); // Å^2 K
        const twoT = 2 * d.temperature;
        let theta = '';
        pending.push({
          text: String(spec.einstein), where: ew, values,
          assign: (t) => {
            theta = t;
            assign(`(${String(zeroPointOverTheta)}) / (${t}) / tanh((${t}) / (${String(twoT)}))`);
          },
        });
        if (spec.static !== undefined) {
          pending.push({
            text: String(spec.static), where: study.where([...qPath, 'static']), values,
            assign: (t) => assign(`(${String(zeroPointOverTheta)}) / (${theta}) / tanh((${theta}) / (${String(twoT)})) + (${t})`),
          });
        }
      }
    }
  }

  // Pass 2: check every expression against the parameters, then substitute the study's values.
  const declared = new Set([...userNames, ...eachNames.keys()]);
  const allNames = [...declared, 's0sq', 'e0'];
  const used = new Set<string>();
  for (const item of pending) {
    const known = (name: string) => declared.has(name) || name === 's0sq' || name === 'e0' || item.values.has(name);
    const compiled = compileChecked(item.text, item.where, known, [...allNames, ...item.values.keys()], item.values);
    compiled.symbols.forEach((s) => { if (!item.values.has(s)) used.add(s); });
    const text = substituteValues(item.text, item.values);
    compileExpression(text, item.where, (name) => known(name)); // the substituted text must still compile
    item.assign(text);
  }
  for (const spec of user) {
    if (spec.expression === undefined) continue;
    const compiled = compileChecked(spec.expression, { ...spec.where, key: `${spec.where?.key}.expression` }, (n) => declared.has(n) || n === 's0sq' || n === 'e0', allNames, new Map());
    compiled.symbols.forEach((s) => used.add(s));
  }
  const auto: ParameterSpec[] = (['s0sq', 'e0'] as const)
    .filter((n) => used.has(n) && !declared.has(n))
    .map((n) => ({ name: n, ...AUTO_PARAMETERS[n], where: { file, line: 1, key: n } }));
  const warnings: string[] = [];
  const byFile = new Map<string, string[]>();
  for (const ds of loaded) byFile.set(resolve(ds.settings.data), [...(byFile.get(resolve(ds.settings.data)) ?? []), ds.settings.name]);
  for (const names of byFile.values()) {
    if (names.length > 1) {
      warnings.push(`data sets ${names.slice(0, -1).join(', ')} and ${names[names.length - 1]} read the same data file: its independent points are counted once per data set, which overstates them; one data set with several kWeightings counts them once`);
    }
  }
  for (const spec of user) {
    if (used.has(spec.name)) continue;
    const state = spec.state ?? (spec.expression !== undefined ? 'tied' : 'free');
    if (state === 'free') {
      throw new InputError(`parameter ${spec.name} is free but nothing uses it (no shell rule, s0sq or e0 of a data set, or tied parameter refers to it)`, spec.where);
    }
    // a tied parameter nothing uses is a derived quantity kept for its reported value and error
    if (state === 'fixed') warnings.push(`parameter ${spec.name} (${formatLocation(spec.where)}) is declared but not used`);
  }
  const parameters = [...auto, ...user, ...eachSpecs];
  defineParameters(parameters); // names, bounds, values, cycles of ties: errors at their lines

  const datasets: PreparedDataset[] = loaded.map((ds, i) => {
    const d = ds.settings;
    const shells = prepared[i].shells;
    const paths = shells.map((s) => s.path);
    const tables = at(study.where(['datasets', d.index]), file, () => tablesForPaths(ds.pathSet, paths, provider, d.kRange[1] + d.kTaper.taper));
    const fit: FitDataset = {
      name: d.name, k: ds.data.chi.k, chi: ds.data.chi.chi, noiseChi: ds.data.chi.noise.k, paths, tables,
      rules: shells.map((s) => s.expressions), s0sq: prepared[i].s0sq, e0: prepared[i].e0,
      kRange: d.kRange, kWeightings: d.kWeightings, kTaper: d.kTaper, rRange: d.rRange, rTaper: d.rTaper, fitIn: d.fitIn,
    };
    return { settings: d, data: ds.data, structure: ds.structure, pathSet: ds.pathSet, shells, fit };
  });
  warnings.push(...approximateTablesWarnings(datasets.flatMap((d) => d.fit.tables)));
  const problem = at({ file, line: study.where(['datasets']).line, key: 'datasets' }, file, () => buildExafsProblem(parameters, datasets.map((d) => d.fit)));

  const description: string[] = [];
  datasets.forEach((ds, i) => {
    const d = ds.settings;
    const byRule = new Map<number, string[]>();
    for (const s of ds.shells) byRule.set(s.rule, [...(byRule.get(s.rule) ?? []), s.path.id]);
    for (const [ruleIndex, ids] of byRule) {
      const rule = loaded[i].rules[Math.max(ruleIndex, 0)];
      const parts = QUANTITIES.map((q) => `${q} = ${describeQuantity(rule.rule[q] ?? DEFAULT_QUANTITIES[q])}`).join(', ');
      const source = ruleIndex < 0 ? `default recipe, shells with r0 <= ${(d.rRange[1] + AUTO_MARGIN).toFixed(2)} Å` : `rule at line ${study.where(rule.path).line}`;
      description.push(`${d.name}: ${ids.join(', ')} (${source}): ${parts}`);
    }
    description.push(`${d.name}: s0sq = ${d.s0sq}, e0 = ${d.e0}${d.temperature !== undefined ? `, temperature ${d.temperature} K` : ''}`);
  });
  for (const a of auto) description.push(`${a.name} ${a.state === 'fixed' ? `fixed at ${a.value}` : `free from ${a.value} within [${a.lower}, ${a.upper}]`} (not declared in the study; the fit command's default)`);

  const inputs: InputRecord[] = [{ role: 'study', file, sha256: study.sha256 }];
  for (const ds of datasets) {
    inputs.push({ role: 'data', file: ds.settings.data, sha256: ds.data.sha256 });
    inputs.push({ role: 'structure', file: ds.settings.structure, sha256: ds.structure.sha256 });
    inputs.push({ role: 'paths', sha256: ds.pathSet.provenance.id });
  }
  const fitOptions = study.input.fit ?? {};
  return {
    study, provider, parameters, eachParameters: eachSpecs.map((p) => p.name), datasets, problem, description, warnings,
    refine: { starts: fitOptions.starts ?? 1, seed: fitOptions.seed ?? 1, maxIterations: fitOptions.maxIterations ?? 200 },
    inputs,
  };
}

function formatLocation(where: InputLocation | undefined): string {
  if (!where) return 'study';
  return `${where.file}:${where.line}`;
}

/** compileExpression with a suggestion for an unknown name and a clear word for `temperature`. */
function compileChecked(text: string, where: InputLocation, known: (name: string) => boolean, names: string[], values: ReadonlyMap<string, number>) {
  try {
    return compileExpression(text, where, known);
  } catch (error) {
    if (error instanceof InputError) {
      const m = /unknown parameter "([^"]+)"/.exec(error.reason);
      if (m) {
        if (m[1] === 'temperature' && !values.has('temperature')) throw new InputError(`${error.reason}: the data set has no temperature (add 'temperature: K')`, where);
        if (['r0', 'n0', 'mu'].includes(m[1])) throw new InputError(`${error.reason}: ${m[1]} is known inside shell rules only`, where);
        throw new InputError(`${error.reason}${suggestion(m[1], names)}`, where);
      }
    }
    throw error;
  }
}
