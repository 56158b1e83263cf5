/**
 * Schema validation of parsed YAML with messages a person can act on: the file, the line, the
 * key path and what was expected, e.g.
 *   study.yaml:14: datasets[0].k: expected MIN:MAX or [min, max]
 *   study.yaml:9: datasets[0].kweightings: unknown key (did you mean 'kWeightings'?)
 * Zod's issues are rewritten here: a union of a number, a text and a mapping reports the mapping's
 * own problem when a mapping was given; an unknown key is looked up against the keys the schema
 * allows at that place and the nearest one (Damerau-Levenshtein distance, optimal string
 * alignment variant; Damerau, Commun. ACM 7, 171 (1964)) is suggested when it is close.
 */
import type { z } from 'zod';
import { InputError, type InputLocation } from '../../core/errors';
import { formatKeyPath, type KeyPath, type PlainValue, type YamlSource } from './yaml-source';

/** Edit distance with adjacent transpositions (optimal string alignment). */
export function editDistance(a: string, b: string): number {
  const m = a.length;
  const n = b.length;
  const d: number[][] = Array.from({ length: m + 1 }, (_, i) => Array.from({ length: n + 1 }, (_, j) => (i === 0 ? j : j === 0 ? i : 0)));
  for (let i = 1; i <= m; i++) {
    for (let j = 1; j <= n; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      d[i][j] = Math.min(d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) d[i][j] = Math.min(d[i][j], d[i - 2][j - 2] + 1);
    }
  }
  return d[m][n];
}

/**
 * The closest candidate to `word` (case-insensitive distance), or undefined when none is within
 * max(1, a third of the word's length) edits.
 */
export function nearest(word: string, candidates: Iterable<string>): string | undefined {
  let best: string | undefined;
  let bestDistance = Infinity;
  const w = word.toLowerCase();
  for (const c of candidates) {
    const dist = editDistance(w, c.toLowerCase());
    if (dist < bestDistance) {
      best = c;
      bestDistance = dist;
    }
  }
  return bestDistance <= Math.max(1, Math.floor(word.length / 3)) ? best : undefined;
}

/** ` (did you mean 'x'?)` or ''. */
export function suggestion(word: string, candidates: Iterable<string>): string {
  const best = nearest(word, candidates);
  return best === undefined ? '' : ` (did you mean '${best}'?)`;
}

type AnySchema = z.ZodType;
interface Def { type: string; [key: string]: unknown }
const defOf = (schema: unknown): Def => (schema as { _zod: { def: Def } })._zod.def;

/** The object shapes a schema accepts at `path` (through optionals, pipes, unions, arrays, records). */
function shapesAt(schema: unknown, path: readonly PropertyKey[]): Record<string, unknown>[] {
  const def = defOf(schema);
  switch (def.type) {
    case 'optional': case 'nullable': case 'default': case 'readonly': case 'catch': case 'prefault': case 'nonoptional':
      return shapesAt(def.innerType, path);
    case 'pipe':
      return shapesAt(def.in, path);
    case 'union':
      return (def.options as unknown[]).flatMap((o) => shapesAt(o, path));
    case 'object': {
      const shape = def.shape as Record<string, unknown>;
      if (path.length === 0) return [shape];
      const key = path[0];
      return typeof key === 'string' && Object.prototype.hasOwnProperty.call(shape, key) ? shapesAt(shape[key], path.slice(1)) : [];
    }
    case 'array':
      return path.length === 0 ? [] : shapesAt(def.element, path.slice(1));
    case 'tuple':
      return path.length === 0 || typeof path[0] !== 'number' ? [] : shapesAt((def.items as unknown[])[path[0]] ?? def.rest, path.slice(1));
    case 'record':
      return path.length === 0 ? [] : shapesAt(def.valueType, path.slice(1));
    default:
      return [];
  }
}

/** Keys the schema allows for a mapping at `path`. */
export function allowedKeys(schema: AnySchema, path: readonly PropertyKey[]): string[] {
  return [...new Set(shapesAt(schema, path).flatMap((s) => Object.keys(s)))];
}

function valueAt(root: PlainValue, path: readonly PropertyKey[]): PlainValue | undefined {
  let v: PlainValue | undefined = root;
  for (const segment of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = Array.isArray(v) ? v[segment as number] : Object.prototype.hasOwnProperty.call(v, segment as string) ? (v as Record<string, PlainValue>)[segment as string] : undefined;
  }
  return v;
}

function describe(value: PlainValue | undefined): string {
  if (value === undefined) return 'nothing';
  if (value === null) return 'an empty value';
  if (Array.isArray(value)) return 'a list';
  if (typeof value === 'object') return 'a mapping';
  if (typeof value === 'string') return `the text '${value.length > 40 ? `${value.slice(0, 37)}...` : value}'`;
  if (typeof value === 'boolean') return `${value}`;
  return `${value}`;
}

const TYPE_WORDS: Record<string, string> = {
  number: 'a number', string: 'a text', object: 'a mapping', array: 'a list', boolean: 'true or false', int: 'a whole number', tuple: 'a list',
};

type Issue = z.core.$ZodIssue;

/** The issue to report for a union: the mapping branch's own issue when a mapping was given. */
function unionIssue(issue: Issue & { code: 'invalid_union' }, root: PlainValue): { issue: Issue; path: PropertyKey[] } {
  const here = [...issue.path];
  const value = valueAt(root, here);
  if (value !== null && typeof value === 'object' && !Array.isArray(value)) {
    for (const branch of issue.errors) {
      const first = branch[0];
      if (!first) continue;
      const rootType = first.code === 'invalid_type' && first.path.length === 0;
      if (!rootType) return { issue: { ...first, path: [...here, ...first.path] } as Issue, path: [...here, ...first.path] };
    }
  }
  return { issue, path: here };
}

function pathWithin(path: readonly PropertyKey[]): KeyPath {
  return path.map((s) => (typeof s === 'number' ? s : String(s)));
}

/** One InputError for the first zod issue, with file, line, key path and a suggestion. */
export function issueToError(issueIn: Issue, schema: AnySchema, source: YamlSource): InputError {
  let { issue, path } = issueIn.code === 'invalid_union' ? unionIssue(issueIn, source.value) : { issue: issueIn, path: [...issueIn.path] };
  // nested unions (a union inside the chosen branch)
  for (let guard = 0; issue.code === 'invalid_union' && guard < 8; guard++) ({ issue, path } = unionIssue({ ...issue, path } as Issue & { code: 'invalid_union' }, source.value));
  const at = (p: readonly PropertyKey[]): InputLocation => ({ file: source.file, line: source.lineOf(pathWithin(p)), key: formatKeyPath(pathWithin(p)) || undefined });
  const value = valueAt(source.value, path);
  // a message written in our schema is used as it is
  if (issue.code !== 'unrecognized_keys' && !/^(Invalid|Too (small|big)|Unrecognized|Expected)/.test(issue.message)) return new InputError(issue.message, at(path));
  switch (issue.code) {
    case 'unrecognized_keys': {
      const allowed = allowedKeys(schema, path);
      const key = issue.keys[0];
      const keyPath = [...path, key];
      const list = allowed.length <= 12 ? ` (allowed here: ${allowed.join(', ')})` : '';
      const hint = suggestion(key, allowed);
      return new InputError(`unknown key${hint || list}`, at(keyPath));
    }
    case 'invalid_type': {
      if (value === undefined) return new InputError(`missing (expected ${TYPE_WORDS[issue.expected] ?? issue.expected})`, at(path));
      return new InputError(`expected ${TYPE_WORDS[issue.expected] ?? issue.expected}, got ${describe(value)}`, at(path));
    }
    case 'invalid_value': {
      const options = issue.values.map(String);
      const hint = typeof value === 'string' ? suggestion(value, options) : '';
      return new InputError(`expected ${options.length === 1 ? options[0] : `one of ${options.join(', ')}`}, got ${describe(value)}${hint}`, at(path));
    }
    case 'too_small': {
      if (issue.origin === 'array') return new InputError(`expected a list of at least ${issue.minimum} item${Number(issue.minimum) === 1 ? '' : 's'}`, at(path));
      if (issue.origin === 'string') return new InputError(`expected a non-empty text`, at(path));
      return new InputError(`must be ${issue.inclusive ? 'at least' : 'greater than'} ${issue.minimum}, got ${describe(value)}`, at(path));
    }
    case 'too_big': {
      if (issue.origin === 'array') return new InputError(`expected a list of at most ${issue.maximum} items`, at(path));
      return new InputError(`must be ${issue.inclusive ? 'at most' : 'less than'} ${issue.maximum}, got ${describe(value)}`, at(path));
    }
    case 'invalid_format':
      return new InputError(`has the wrong form, got ${describe(value)}`, at(path));
    case 'not_multiple_of':
      return new InputError(`must be a multiple of ${issue.divisor}, got ${describe(value)}`, at(path));
    default: {
      if (issue.message.startsWith('Invalid input')) return new InputError(`invalid value ${describe(value)}`, at(path));
      return new InputError(issue.message, at(path));
    }
  }
}

/**
 * Validate parsed YAML against a zod schema.
 * @throws InputError for the first problem, located as {@link issueToError} does.
 */
export function validateSource<S extends AnySchema>(schema: S, source: YamlSource): z.output<S> {
  const result = schema.safeParse(source.value);
  if (result.success) return result.data as z.output<S>;
  const issues = [...result.error.issues];
  // report the problem nearest the top of the file first
  issues.sort((a, b) => source.lineOf(pathWithin(a.path)) - source.lineOf(pathWithin(b.path)));
  throw issueToError(issues[0], schema, source);
}
