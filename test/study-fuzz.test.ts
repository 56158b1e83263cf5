/**
 * Property tests of the study reader (fast-check, fixed seeds): random YAML-like text, and random
 * mutations of a valid study (of its text and of its parsed content), either load and prepare or
 * fail with our InputError naming the study file and a line, never with another exception.
 * Preparation loads synthetic data (test/fixtures/studies/synthetic.ts) with the 'parametric'
 * provider (fast; physics does not matter here); nothing is fitted.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { stringify } from 'yaml';
import { InputError } from '../src/core/errors';
import { parseStudyText } from '../src/fit/study/load';
import { prepareStudy } from '../src/fit/study/compile';
import { parseYamlSource } from '../src/fit/study/yaml-source';
import { defaultProviders } from '../src/scatter/registry';
import { CU_STRUCTURE, tempFolder, writeSyntheticCuChi } from './fixtures/studies/synthetic';

const providers = defaultProviders({ cache: false });
const folder = tempFolder();
writeSyntheticCuChi(folder, 'cu.chi.json', { noise: 0.002, seed: 1, shells: [{ n: 12, r: 2.55, msrd: 0.008 }, { n: 6, r: 3.6, msrd: 0.012 }] });
const FILE = 'fuzz.study.yaml';

const VALID = `title: fuzz base
provider: parametric
fit: { starts: 1, maxIterations: 50 }
parameters:
  s0sq: { value: 0.9, bounds: [0.5, 1.5] }
  e0: { value: 0, bounds: [-10, 10] }
  s1: { value: 0.005, bounds: [0, 0.05] }
  expansion: { value: 0, bounds: [-0.05, 0.05] }
  thetaE: { value: 300, bounds: [50, 1000] }
  half: "0.5 * s1"
defaults:
  data: cu.chi.json
  structure: ${CU_STRUCTURE}
  absorber: Cu
  k: [3, 14]
  r: 1.5:3.4
  kTaper: { shape: hann, taper: 1 }
datasets:
  - name: first
    kWeightings: [1, 2]
    temperature: 300
    shells:
      - include: Cu.1
        msrd: { einstein: thetaE, static: half }
      - include: { species: Cu, distance: 3:4 }
        r: { expand: expansion }
        msrd: { each: { value: 0.006, bounds: [0, 0.05] } }
  - name: second
    fitIn: k
    shells:
      - include: [Cu.1]
        n: n0
        r: r0 * (1 + expansion)
        msrd: s1
output: { json: out.json }
`;

/** Parse and prepare; return the error (or null on success). */
function attempt(text: string): unknown {
  try {
    prepareStudy(parseStudyText(text, FILE, folder), { providers });
    return null;
  } catch (error) {
    return error;
  }
}

function expectOurError(error: unknown, text: string): void {
  if (error === null) return;
  if (!(error instanceof InputError)) throw new Error(`not an InputError for\n${text}\n---\n${error instanceof Error ? error.stack : String(error)}`);
  expect(error.file, error.message).toBe(FILE);
  expect(Number.isInteger(error.line) && (error.line as number) >= 1, error.message).toBe(true);
  expect(error.message.startsWith(`${FILE}:${error.line}: `), error.message).toBe(true);
}

const TOKENS = [
  'datasets:', 'parameters:', 'defaults:', 'shells:', 'include:', 'msrd:', 'r:', 'k:', 'data:', 'structure:', 'absorber:', 'each', 'einstein:',
  ' ', '  ', '\n', '\n  ', '\n    - ', '- ', ':', ': ', '[', ']', '{', '}', ',', '"', "'", '#', '&a ', '*a', '!!binary ', '!tag ', '? ', '|', '>', '---', '...',
  '%YAML 1.2', '0', '1', '3:14', '-1e9', '.inf', '.nan', 'null', '~', 'true', 'Cu', 'Cu.1', 'r0 + 0.1', '__proto__', 'constructor', '\t', '\u00e9', '\u0000',
];

describe('study reader on random input (fast-check, seeded)', () => {
  it('accepts the valid base study', () => {
    expect(attempt(VALID)).toBeNull();
  });

  it('random YAML-like text: only InputError with file and line', () => {
    fc.assert(
      fc.property(fc.array(fc.constantFrom(...TOKENS), { maxLength: 60 }), (tokens) => {
        const text = tokens.join('');
        expectOurError(attempt(text), text);
      }),
      { seed: 20241201, numRuns: 400 },
    );
  });

  it('random edits of the valid text (delete, duplicate, insert, truncate, swap lines): only InputError with file and line', () => {
    const lines = VALID.split('\n');
    const edit = fc.oneof(
      fc.record({ kind: fc.constant('delete' as const), at: fc.nat(lines.length - 1) }),
      fc.record({ kind: fc.constant('duplicate' as const), at: fc.nat(lines.length - 1) }),
      fc.record({ kind: fc.constant('insert' as const), at: fc.nat(VALID.length), text: fc.constantFrom(...TOKENS) }),
      fc.record({ kind: fc.constant('truncate' as const), at: fc.nat(VALID.length) }),
      fc.record({ kind: fc.constant('swap' as const), at: fc.nat(lines.length - 1), with: fc.nat(lines.length - 1) }),
    );
    fc.assert(
      fc.property(fc.array(edit, { minLength: 1, maxLength: 4 }), (edits) => {
        let text = VALID;
        for (const e of edits) {
          const ls = text.split('\n');
          const i = e.at % Math.max(ls.length, 1);
          if (e.kind === 'delete') ls.splice(i, 1);
          else if (e.kind === 'duplicate') ls.splice(i, 0, ls[i] ?? '');
          else if (e.kind === 'swap') { const j = e.with % ls.length; [ls[i], ls[j]] = [ls[j], ls[i]]; }
          if (e.kind === 'insert') text = text.slice(0, e.at % (text.length + 1)) + e.text + text.slice(e.at % (text.length + 1));
          else if (e.kind === 'truncate') text = text.slice(0, e.at % (text.length + 1));
          else text = ls.join('\n');
        }
        expectOurError(attempt(text), text);
      }),
      { seed: 7, numRuns: 300 },
    );
  });

  it('random changes of the parsed content (set any key to any value, delete, rename): only InputError with file and line', () => {
    const base = parseYamlSource(VALID, FILE).value as Record<string, unknown>;
    // every path into the base content
    const paths: (string | number)[][] = [];
    const walk = (v: unknown, p: (string | number)[]) => {
      paths.push(p);
      if (Array.isArray(v)) v.forEach((x, i) => walk(x, [...p, i]));
      else if (v && typeof v === 'object') for (const [k, x] of Object.entries(v)) walk(x, [...p, k]);
    };
    walk(base, []);
    const value = fc.oneof(
      fc.double({ noDefaultInfinity: false, noNaN: false }), fc.integer(), fc.string({ maxLength: 12 }), fc.boolean(), fc.constant(null),
      fc.constantFrom('3:14', '14:3', 'auto', 'Cu.2', 'each', 'r0', 'n0 * 2', 'thetaE', 'expansion + s1', 'half', 'e0', 'temperature', 'hann', 'q', 'free', 'fixed', 'tied'),
      fc.array(fc.oneof(fc.double(), fc.integer({ min: -3, max: 40 }), fc.constant(null), fc.string({ maxLength: 4 })), { maxLength: 3 }),
      fc.dictionary(fc.constantFrom('value', 'bounds', 'each', 'einstein', 'expand', 'state', 'from', 'include', 'name', 'x'), fc.oneof(fc.double(), fc.string({ maxLength: 5 }), fc.constant('s1')), { maxKeys: 3 }),
    );
    const change = fc.record({ path: fc.constantFrom(...paths), kind: fc.constantFrom('set', 'delete', 'rename'), value, newKey: fc.string({ minLength: 1, maxLength: 8 }) });
    fc.assert(
      fc.property(fc.array(change, { minLength: 1, maxLength: 3 }), (changes) => {
        const doc = structuredClone(base) as Record<string, unknown>;
        for (const c of changes) {
          if (c.path.length === 0) continue;
          let parent: unknown = doc;
          for (const s of c.path.slice(0, -1)) parent = parent && typeof parent === 'object' ? (parent as Record<string | number, unknown>)[s] : undefined;
          if (!parent || typeof parent !== 'object') continue;
          const last = c.path[c.path.length - 1];
          const p = parent as Record<string | number, unknown>;
          if (c.kind === 'set') p[last] = c.value;
          else if (c.kind === 'delete') { if (Array.isArray(p)) p.splice(Number(last), 1); else delete p[last]; }
          else if (!Array.isArray(p) && last in p) { p[c.newKey] = p[last]; delete p[last]; }
        }
        const text = stringify(doc);
        expectOurError(attempt(text), text);
      }),
      { seed: 99, numRuns: 400 },
    );
  });
});
