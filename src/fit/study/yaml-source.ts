/**
 * Reading the YAML text of a study file into plain JSON-like values while remembering the line of
 * every key and value, so later checks can say `study.yaml:14: datasets[0].k: ...`.
 *
 * Parsing is done by the `yaml` package (YAML 1.2 core schema: strings, numbers, booleans, null,
 * mappings and sequences); the conversion from its node tree to values is our own, so that
 * - every key and value gets its 1-based line (from the node's source offset and a LineCounter);
 * - only plain data comes out: mappings with scalar keys become objects whose keys are own
 *   properties (a key such as `__proto__` stays an ordinary key and never touches a prototype),
 *   sequences become arrays, and tagged values other than the core types are refused;
 * - aliases are expanded with limits on depth and on the number of values produced, so a small
 *   file cannot expand into a huge one ("billion laughs").
 * Every problem is an InputError naming the file and the line.
 */
import { isAlias, isMap, isPair, isScalar, isSeq, LineCounter, parseDocument, type Node as YamlNode } from 'yaml';
import { InputError } from '../../core/errors';

/** A key path into the parsed value: mapping keys and sequence indices. */
export type KeyPath = readonly (string | number)[];

/** Deepest nesting accepted. */
export const MAX_YAML_DEPTH = 64;
/** Most values (scalars and collections, after expanding aliases) accepted. */
export const MAX_YAML_VALUES = 200_000;

/** Plain values a study is made of. */
export type PlainValue = string | number | boolean | null | PlainValue[] | { [key: string]: PlainValue };

export interface YamlSource {
  /** File name used in messages, as the user gave it. */
  file: string;
  /** The parsed content (null for an empty document). */
  value: PlainValue;
  /**
   * Line (1-based) of the entry at `path`: the line of its key for a mapping entry, of its item
   * for a sequence entry; for a path that does not exist, the line of the nearest enclosing
   * entry that does (a missing key is reported at its mapping). Always a line: 1 for the root.
   */
  lineOf(path: KeyPath): number;
}

/** `datasets[0].k`, `parameters.s0sq.bounds`, `parameters["odd key"]`. */
export function formatKeyPath(path: KeyPath): string {
  let out = '';
  for (const segment of path) {
    if (typeof segment === 'number') out += `[${segment}]`;
    else if (/^[A-Za-z_][A-Za-z0-9_]*$/.test(segment)) out += out === '' ? segment : `.${segment}`;
    else out += `[${JSON.stringify(segment)}]`;
  }
  return out;
}

const pathKey = (path: KeyPath): string => JSON.stringify(path);

/**
 * Parse YAML text into plain values with a line for every key path.
 * @throws InputError (file and line) for syntax errors, several documents, unsupported tags,
 *   collection keys, unresolved aliases, or input too deep or too large.
 */
export function parseYamlSource(text: string, file: string): YamlSource {
  const lineCounter = new LineCounter();
  const lineAt = (offset: number | undefined): number => (offset === undefined ? 1 : lineCounter.linePos(offset).line);
  let doc;
  try {
    doc = parseDocument(text, { lineCounter, keepSourceTokens: true, prettyErrors: false, uniqueKeys: true, schema: 'core', merge: false, strict: true });
  } catch (error) {
    // the parser reports problems as doc.errors; anything thrown is still a problem of the text
    throw new InputError(`cannot be read as YAML (${error instanceof Error ? error.message.split('\n')[0] : String(error)})`, { file, line: 1 });
  }
  const problem = doc.errors[0] ?? doc.warnings.find((w) => w.code === 'TAG_RESOLVE_FAILED');
  if (problem) {
    const message = problem.message.split('\n')[0].replace(/ at line \d+, column \d+:?$/, '');
    throw new InputError(`YAML: ${message}`, { file, line: lineAt(problem.pos?.[0]) });
  }
  const lines = new Map<string, number>();
  let count = 0;

  const convert = (node: unknown, path: (string | number)[], depth: number, aliasDepth: number): PlainValue => {
    if (++count > MAX_YAML_VALUES) throw new InputError(`holds more than ${MAX_YAML_VALUES} values (after expanding aliases)`, { file, line: lineAt(offsetOf(node)) });
    if (depth > MAX_YAML_DEPTH) throw new InputError(`is nested deeper than ${MAX_YAML_DEPTH} levels`, { file, line: lineAt(offsetOf(node)) });
    if (node === null || node === undefined) return null;
    const line = lineAt(offsetOf(node));
    if (!lines.has(pathKey(path))) lines.set(pathKey(path), line);
    if (isAlias(node)) {
      if (aliasDepth > 16) throw new InputError('aliases nested too deeply', { file, line });
      const target = node.resolve(doc);
      if (!target) throw new InputError(`YAML: unknown alias *${node.source}`, { file, line });
      return convert(target, path, depth + 1, aliasDepth + 1);
    }
    if (isScalar(node)) {
      const v = node.value;
      if (v === null || typeof v === 'string' || typeof v === 'boolean') return v;
      if (typeof v === 'number') return v;
      throw new InputError(`YAML: a value of type ${v instanceof Uint8Array ? 'binary' : typeof v} is not allowed here (use plain text or numbers)`, { file, line });
    }
    if (isMap(node)) {
      const out: { [key: string]: PlainValue } = {};
      for (const item of node.items) {
        if (!isPair(item)) continue;
        const keyNode = item.key as YamlNode | null;
        let key: string;
        if (keyNode === null || keyNode === undefined) key = '';
        else if (isScalar(keyNode)) key = keyNode.value === null ? '' : String(keyNode.value);
        else throw new InputError('YAML: a mapping key must be plain text, not a list or mapping', { file, line: lineAt(offsetOf(keyNode)) });
        const childPath = [...path, key];
        lines.set(pathKey(childPath), keyNode ? lineAt(offsetOf(keyNode)) : line);
        const value = convert(item.value, childPath, depth + 1, aliasDepth);
        // own, enumerable property even for keys such as __proto__
        Object.defineProperty(out, key, { value, enumerable: true, writable: true, configurable: true });
      }
      return out;
    }
    if (isSeq(node)) {
      return node.items.map((item, i) => {
        if (item === null || item === undefined) lines.set(pathKey([...path, i]), line);
        return convert(item, [...path, i], depth + 1, aliasDepth);
      });
    }
    if (isPair(node)) throw new InputError('YAML: unexpected key-value pair', { file, line });
    throw new InputError('YAML: unsupported content', { file, line });
  };

  const value = convert(doc.contents, [], 0, 0);
  const lineOf = (path: KeyPath): number => {
    for (let n = path.length; n >= 0; n--) {
      const line = lines.get(pathKey(path.slice(0, n)));
      if (line !== undefined) return line;
    }
    return 1;
  };
  return { file, value, lineOf };
}

function offsetOf(node: unknown): number | undefined {
  const range = (node as { range?: [number, number, number] } | null)?.range;
  return range ? range[0] : undefined;
}
