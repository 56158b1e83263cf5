/**
 * Error messages of study files: every problem names the study file, the line and the key path.
 * Inputs are small invented studies on synthetic data (test/fixtures/studies/synthetic.ts) with
 * the 'parametric' provider (fast; the physics does not matter for messages).
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { writeFileSync } from 'node:fs';
import { InputError } from '../src/core/errors';
import { parseStudyText } from '../src/fit/study/load';
import { prepareStudy } from '../src/fit/study/compile';
import { editDistance, nearest } from '../src/fit/study/validate';
import { formatKeyPath, parseYamlSource } from '../src/fit/study/yaml-source';
import { replaceNames, substituteValues } from '../src/fit/study/symbols';
import { defaultProviders } from '../src/scatter/registry';
import { cli } from './helpers/cli';
import { CU_STRUCTURE, tempFolder, writeSyntheticCuChi } from './fixtures/studies/synthetic';

const providers = defaultProviders({ cache: false });
const folder = tempFolder();
writeSyntheticCuChi(folder, 'cu.chi.json', { noise: 0.002, seed: 1 });
const FILE = 'bad.study.yaml';

/** A valid study, line by line; tests replace or add lines. */
const VALID = [
  'provider: parametric', //                     1
  'parameters:', //                              2
  '  s0sq: 0.9', //                               3
  '  e0: { value: 0, bounds: [-10, 10] }', //    4
  '  s1: { value: 0.005, bounds: [0, 0.05] }', // 5
  'datasets:', //                                6
  '  - data: cu.chi.json', //                    7
  `    structure: ${CU_STRUCTURE}`, //           8
  '    absorber: Cu', //                         9
  '    k: 3:14', //                              10
  '    r: 1.5:3', //                             11
  '    shells:', //                              12
  '      - include: Cu.1', //                    13
  '        msrd: s1', //                         14
];

function studyError(lines: string[]): InputError {
  try {
    prepareStudy(parseStudyText(lines.join('\n') + '\n', FILE, folder), { providers });
  } catch (error) {
    expect(error).toBeInstanceOf(InputError);
    return error as InputError;
  }
  throw new Error('expected an InputError');
}

const replace = (line: number, text: string): string[] => VALID.map((l, i) => (i === line - 1 ? text : l));

describe('study error messages name the file, the line and the key', () => {
  it('accepts the valid study the other cases start from', () => {
    const prepared = prepareStudy(parseStudyText(VALID.join('\n'), FILE, folder), { providers });
    expect(prepared.problem.parameters.freeNames).toEqual(['e0', 's1', 'r_Cu_1']);
  });

  it('malformed YAML', () => {
    const e = studyError(replace(4, '  e0: { value: 0, bounds: [-10, 10]'));
    expect(e.file).toBe(FILE);
    expect(e.message).toMatch(/^bad\.study\.yaml:\d+: YAML: /);
    expect(e.line).toBeGreaterThanOrEqual(4);
  });

  it('a duplicated key', () => {
    const e = studyError([...VALID.slice(0, 10), '    k: 2:12', ...VALID.slice(10)]);
    expect(e.message).toMatch(/^bad\.study\.yaml:11: YAML: Map keys must be unique/);
  });

  it('an unknown key, with the nearest valid key', () => {
    expect(studyError(replace(11, '    kweightings: 2')).message).toBe("bad.study.yaml:11: datasets[0].kweightings: unknown key (did you mean 'kWeightings'?)");
    expect(studyError(replace(1, 'provder: parametric')).message).toBe("bad.study.yaml:1: provder: unknown key (did you mean 'provider'?)");
    expect(studyError(replace(4, '  e0: { value: 0, bound: [-10, 10] }')).message).toBe("bad.study.yaml:4: parameters.e0.bound: unknown key (did you mean 'bounds'?)");
    expect(studyError(replace(14, '        msdr: s1')).message).toBe("bad.study.yaml:14: datasets[0].shells[0].msdr: unknown key (did you mean 'msrd'?)");
    // no near key: the allowed keys are listed instead
    expect(studyError(replace(14, '        colour: red')).message).toMatch(/^bad\.study\.yaml:14: datasets\[0\]\.shells\[0\]\.colour: unknown key \(allowed here: include, n, r, msrd, c3, c4\)$/);
  });

  it('wrong types and values', () => {
    expect(studyError(replace(10, '    k: 3-14')).message).toBe('bad.study.yaml:10: datasets[0].k: expected MIN:MAX or [min, max]');
    expect(studyError(replace(10, '    k: 14:3')).message).toBe('bad.study.yaml:10: datasets[0].k: the range must increase, got 14:3');
    expect(studyError(replace(9, '    absorber: [Cu]')).message).toMatch(/^bad\.study\.yaml:9: datasets\[0\]\.absorber: expected an element/);
    expect(studyError([...VALID, '    radius: big']).message).toBe("bad.study.yaml:15: datasets[0].radius: expected a number, got the text 'big'");
    expect(studyError([...VALID, '    fitIn: r']).message).toBe("bad.study.yaml:15: datasets[0].fitIn: expected one of k, R, q, got the text 'r' (did you mean 'R'?)");
    expect(studyError([...VALID, '    kTaper: { shape: han }']).message).toMatch(/^bad\.study\.yaml:15: datasets\[0\]\.kTaper\.shape: expected one of hann, box, kaiser, welch, got the text 'han' \(did you mean 'hann'\?\)$/);
    expect(studyError(replace(5, '  s1: { value: small }')).message).toBe("bad.study.yaml:5: parameters.s1.value: expected a number, got the text 'small'");
    expect(studyError(replace(5, '  s1: true')).message).toMatch(/^bad\.study\.yaml:5: parameters\.s1: expected a number \(fixed\), an expression \(tied\) or a mapping/);
    expect(studyError(['provider: parametric']).message).toBe('bad.study.yaml:1: datasets: missing (expected a list)');
    expect(studyError(['- 1', '- 2']).message).toMatch(/^bad\.study\.yaml:1: a study file is a mapping/);
    expect(studyError(['']).message).toMatch(/^bad\.study\.yaml:1: the study file is empty/);
  });

  it('a missing data file', () => {
    const e = studyError(replace(7, '  - data: nowhere.xdi'));
    expect(e.message).toMatch(/^bad\.study\.yaml:7: datasets\[0\]\.data: .*nowhere\.xdi: no such file$/);
  });

  it('a missing required key', () => {
    expect(studyError(VALID.filter((_, i) => i !== 7)).message).toBe("bad.study.yaml:7: datasets[0]: needs 'structure' (here or under defaults)");
  });

  it('an edge that clashes with the data file\'s edge, at the edge key', () => {
    expect(studyError([...VALID, '    edge: L3']).message).toMatch(/^bad\.study\.yaml:15: datasets\[0\]\.edge: \S*cu\.chi\.json: edge L3 clashes with the data's edge K \(a Cu K spectrum\); leave edge out to use the data's$/);
  });

  it('a bad expression', () => {
    expect(studyError(replace(14, '        msrd: "s1 +* 2"')).message).toMatch(/^bad\.study\.yaml:14: datasets\[0\]\.shells\[0\]\.msrd: expression "s1 \+\* 2" refused: /);
    expect(studyError(replace(14, '        msrd: "import(\'fs\')"')).message).toMatch(/^bad\.study\.yaml:14: datasets\[0\]\.shells\[0\]\.msrd: expression .* refused: character "'" is not allowed/);
    expect(studyError(replace(14, '        msrd: evaluate(s1)')).message).toMatch(/^bad\.study\.yaml:14: .*function "evaluate" is not allowed/);
  });

  it('an unknown parameter in an expression, with the nearest name', () => {
    expect(studyError(replace(14, '        msrd: s2')).message).toBe('bad.study.yaml:14: datasets[0].shells[0].msrd: expression "s2" refused: unknown parameter "s2" (did you mean \'s1\'?)');
    expect(studyError([...VALID.slice(0, 5), '  s3: "2 * sigma"', ...VALID.slice(5)]).message).toMatch(/^bad\.study\.yaml:6: parameters\.s3\.expression: expression "2 \* sigma" refused: unknown parameter "sigma"/);
    expect(studyError(replace(14, '        msrd: 0.001 * temperature')).message).toMatch(/^bad\.study\.yaml:14: .*unknown parameter "temperature": the data set has no temperature/);
  });

  it('a cycle of tied parameters', () => {
    const e = studyError([...VALID.slice(0, 5), '  a: "b + 1"', '  b: "2 * a"', ...VALID.slice(5, 13), '        msrd: s1 + 0 * a']);
    expect(e.message).toBe('bad.study.yaml:6: parameters.a: parameters tied in a cycle: a -> b -> a');
  });

  it('an unknown shell id, with the nearest id and the list of shells', () => {
    const e = studyError(replace(13, '      - include: Cu.l'));
    expect(e.message).toMatch(/^bad\.study\.yaml:13: datasets\[0\]\.shells\[0\]\.include: no shell 'Cu\.l' around Cu within 6 Å in .*cu-p1\.cif \(did you mean 'Cu\.1'\?\); the shells are Cu\.1 \(2\.556 Å\), Cu\.2 \(3\.615 Å\)/);
    const listed = studyError(replace(13, '      - include: [Cu.1, O.1]'));
    expect(listed.message).toMatch(/^bad\.study\.yaml:13: datasets\[0\]\.shells\[0\]\.include\[1\]: no shell 'O\.1'/);
    expect(studyError(replace(13, '      - include: { distance: 4.1:4.2 }')).message).toMatch(/^bad\.study\.yaml:13: datasets\[0\]\.shells\[0\]\.include: no shell matches/);
  });

  it('a shell included by two rules', () => {
    const e = studyError([...VALID, '      - include: { species: Cu, distance: 2:3 }']);
    expect(e.message).toBe('bad.study.yaml:15: datasets[0].shells[1].include: shell Cu.1 is already included by the rule at line 13');
  });

  it('a free parameter nothing uses, einstein without temperature, and a rank section', () => {
    expect(studyError([...VALID.slice(0, 5), '  spare: { value: 1 }', ...VALID.slice(5)]).message).toMatch(/^bad\.study\.yaml:6: parameters\.spare: parameter spare is free but nothing uses it/);
    expect(studyError([...VALID.slice(0, 5), '  thetaE: { value: 300 }', ...VALID.slice(5, 13), '        msrd: { einstein: thetaE }']).message)
      .toMatch(/^bad\.study\.yaml:15: datasets\[0\]\.shells\[0\]\.msrd\.einstein: the Einstein model needs the sample temperature/);
    expect(studyError([...VALID, 'rank:', '  candidates: [a.xyz]']).message).toMatch(/^bad\.study\.yaml:15: rank: ranking from a study file is not available yet/);
  });

  it('bounds on a fixed parameter and a value outside its bounds come from the parameter rules, at their lines', () => {
    expect(studyError(replace(3, '  s0sq: { value: 0.9, state: fixed, bounds: [0, 1] }')).message).toMatch(/^bad\.study\.yaml:3: parameters\.s0sq: parameter "s0sq": only free parameters may have bounds/);
    expect(studyError(replace(5, '  s1: { value: 0.5, bounds: [0, 0.05] }')).message).toMatch(/^bad\.study\.yaml:5: parameters\.s1: parameter "s1": value 0\.5 lies outside its bounds/);
    expect(studyError(replace(5, '  r0: { value: 0.005 }')).message).toMatch(/^bad\.study\.yaml:5: parameters\.r0: 'r0' cannot name a parameter/);
  });

  it('a problem in defaults is reported at the defaults line, with the defaults key path', () => {
    const lines = [
      'provider: parametric',
      'defaults:',
      '  data: cu.chi.json',
      `  structure: ${CU_STRUCTURE}`,
      '  absorber: Cu',
      '  shells:',
      '    - include: Cu.7',
      'datasets:',
      '  - { name: a }',
    ];
    expect(studyError(lines).message).toMatch(/^bad\.study\.yaml:7: defaults\.shells\[0\]\.include: no shell 'Cu\.7'/);
    expect(studyError([...lines.slice(0, 5), '  k: [3, 30]', 'datasets:', '  - { name: a }']).message).toMatch(/^bad\.study\.yaml:6: defaults\.k: the data end at k = 16\.00 1\/Å, short of the k range 3:30$/);
    // a data set's own key wins over defaults, and its errors point at the data set
    expect(studyError([...lines.slice(0, 5), 'datasets:', '  - name: a', '    k: [3, 30]']).message).toMatch(/^bad\.study\.yaml:8: datasets\[0\]\.k: the data end/);
  });

  it('a reference fit without the parameter asked for', () => {
    writeFileSync(join(folder, 'ref.fit.json'), JSON.stringify({ params: { s0sq: { value: 0.8 } } }));
    expect(studyError(replace(3, '  s0sq: { from: { file: ref.fit.json, parameter: s0 } }')).message)
      .toMatch(/^bad\.study\.yaml:3: parameters\.s0sq\.from: .*ref\.fit\.json has no params\.s0\.value/);
    expect(studyError(replace(3, '  s0sq: { from: missing.fit.json }')).message).toMatch(/^bad\.study\.yaml:3: parameters\.s0sq\.from: .*missing\.fit\.json: no such file/);
  });

  it('the run command prints one line with the location and exits with code 2', async () => {
    const path = join(folder, 'cli-bad.study.yaml');
    writeFileSync(path, replace(11, '    kweightings: 2').join('\n'));
    const run = await cli(['run', path]);
    expect(run.code).toBe(2);
    expect(run.stderr).toBe(`shellrank: error: ${path}:11: datasets[0].kweightings: unknown key (did you mean 'kWeightings'?)\n`);
    const missing = await cli(['run', join(folder, 'none.study.yaml')]);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/none\.study\.yaml: no such file/);
  });
});

describe('study helpers', () => {
  it('formats key paths as datasets[0].k and parameters["odd key"]', () => {
    expect(formatKeyPath(['datasets', 0, 'k'])).toBe('datasets[0].k');
    expect(formatKeyPath(['parameters', 'odd key'])).toBe('parameters["odd key"]');
    expect(formatKeyPath([])).toBe('');
  });
  it('measures edit distance with transpositions (Damerau, Commun. ACM 7, 171 (1964): one transposition costs 1)', () => {
    expect(editDistance('msdr', 'msrd')).toBe(1);
    expect(editDistance('kitten', 'sitting')).toBe(3); // the classic Levenshtein example, distance 3
    expect(nearest('kweightings', ['kWeightings', 'k', 'r'])).toBe('kWeightings');
    expect(nearest('zzzz', ['k', 'r'])).toBeUndefined();
  });
  it('replaces names but never digits inside numbers', () => {
    expect(substituteValues('r0 * (1 + 1e0) + 2r0', new Map([['r0', 2.5]]))).toBe('(2.5) * (1 + 1e0) + 2(2.5)');
    expect(replaceNames('r0x + xr0 + r0', (n) => (n === 'r0' ? 'R' : undefined))).toBe('r0x + xr0 + R');
  });
  it('gives every YAML entry its line, and a missing key the line of its mapping', () => {
    const source = parseYamlSource('a: 1\nb:\n  c: [1, 2]\n  d:\n    - x: 1\n', 'f.yaml');
    expect(source.lineOf(['a'])).toBe(1);
    expect(source.lineOf(['b'])).toBe(2);
    expect(source.lineOf(['b', 'c', 1])).toBe(3);
    expect(source.lineOf(['b', 'd', 0, 'x'])).toBe(5);
    expect(source.lineOf(['b', 'missing'])).toBe(2);
  });
  it('keeps a __proto__ key an ordinary key', () => {
    const source = parseYamlSource('"__proto__": { polluted: 1 }\n', 'f.yaml');
    expect(Object.getPrototypeOf(source.value)).toBe(Object.prototype);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    expect(Object.keys(source.value as object)).toEqual(['__proto__']);
  });
});
