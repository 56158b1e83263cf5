import { describe, it, expect, beforeAll } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { CAUTION_TEXT, escapeHtml, inlineSvg, renderHtml } from '../src/report/html';
import { writeReport, fileSlug, type WrittenReport } from '../src/report/index';
import { detectResultKind, reportModelFrom } from '../src/report/types';
import { InputError } from '../src/core/errors';
import { cli } from './helpers/cli';
import { fabricatedFit, fabricatedRank } from './helpers/report-fixtures';

// Hostile names: HTML injection in text, in attributes, and path traversal in file names
// (OWASP XSS Prevention Cheat Sheet, rule 1 and rule 2 contexts).
const HOSTILE = [
  '<script>alert(1)</script>',
  '"><img src=x onerror=alert(2)>',
  "' onmouseover='alert(3)",
  '../../etc/passwd & <b>bold</b>',
];

function tempDir(): string {
  return mkdtempSync(join(tmpdir(), 'shellrank-report-'));
}

describe('escapeHtml', () => {
  it('encodes the five characters OWASP lists for HTML content and attributes', () => {
    expect(escapeHtml(`&<>"'`)).toBe('&amp;&lt;&gt;&quot;&#39;');
    expect(escapeHtml('plain Å text')).toBe('plain Å text');
  });
});

describe('result detection and validation', () => {
  it('tells fit from rank results and refuses anything else with the file named', () => {
    expect(detectResultKind(fabricatedFit('a', 0))).toBe('fit');
    expect(detectResultKind(fabricatedRank())).toBe('rank');
    expect(detectResultKind([1, 2])).toBeNull();
    expect(() => reportModelFrom({ hello: 1 }, 'x.json')).toThrow(InputError);
    expect(() => reportModelFrom({ hello: 1 }, 'x.json')).toThrow(/x\.json: is neither a fit result/);
  });

  it('names the key of a field with the wrong type', () => {
    const bad = fabricatedRank();
    (bad.candidates[1] as unknown as { rank: string }).rank = 'second';
    expect(() => reportModelFrom(bad, 'r.json')).toThrow(/r\.json: candidates\.1\.rank/);
  });

  it('refuses curves whose arrays disagree in length, naming both', () => {
    const fit = fabricatedFit('a', 0);
    fit.curves.model = fit.curves.model.slice(5);
    expect(() => reportModelFrom(fit, 'f.json')).toThrow(/curves\.model: has 316 values but curves\.k has 321/);
  });

  it('accepts nulls (our JSON writer\'s NaN) and a correlation matrix', () => {
    const fit = fabricatedFit('a', 0) as unknown as Record<string, unknown>;
    (fit.stats as Record<string, unknown>).aic = null;
    fit.correlations = { names: ['s0sq', 'e0', 'r'], matrix: [[1, 0.2, 0.95], [0.2, 1, -0.4], [0.95, -0.4, 1]] };
    const model = reportModelFrom(fit);
    expect(model.candidates[0].stats.aic).toBeNull();
    expect(model.candidates[0].correlations).toEqual([
      { a: 's0sq', b: 'e0', value: 0.2 },
      { a: 's0sq', b: 'r', value: 0.95 },
      { a: 'e0', b: 'r', value: -0.4 },
    ]);
  });
});

describe('renderHtml', () => {
  const model = reportModelFrom(JSON.parse(JSON.stringify(fabricatedRank(HOSTILE))));
  const html = renderHtml(model, {
    embedFont: false,
    input: { file: 'results/<rank>.json', sha256: 'ab'.repeat(32) },
    version: '0.0.0-test',
    plots: [{ id: 'p', title: 'T <1>', svg: '<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10" viewBox="0 0 10 10"><clipPath id="clip1"/><g clip-path="url(#clip1)"/></svg>', caption: 'c & d' }],
  });

  it('never lets a user string through unescaped', () => {
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/<img/i);
    expect(html).not.toContain('onerror=alert(2)>');
    expect(html).not.toMatch(/=\s*'alert/);
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    expect(html).toContain('&quot;&gt;&lt;img src=x onerror=alert(2)&gt;');
    expect(html).toContain('&#39; onmouseover=&#39;alert(3)');
    expect(html).toContain('results/&lt;rank&gt;.json');
  });

  it('makes no external requests: no http(s) URL, no script, no src attribute, a CSP that forbids them', () => {
    expect(html).not.toMatch(/https?:\/\//);
    // no src attribute in any tag (quoted attribute values, escaped user text, are blanked first)
    expect(html.replace(/"[^"]*"/g, '""')).not.toMatch(/<[^>]*\ssrc=/i);
    expect(html).not.toMatch(/@import/);
    expect(html).toContain(`content="default-src 'none'; style-src 'unsafe-inline'; font-src data:; img-src data:"`);
  });

  it('carries the caution, the ranking, each fit, the warnings and a collapsible provenance', () => {
    expect(html).toContain(escapeHtml(CAUTION_TEXT));
    expect(CAUTION_TEXT).toMatch(/model|models/);
    expect(CAUTION_TEXT).toMatch(/never replaces beamline or laboratory safety procedures/);
    expect(html).toContain('<table id="ranking">');
    for (let i = 1; i <= HOSTILE.length; i++) expect(html).toContain(`id="candidate-${i}"`);
    expect(html).toContain('fabricated test fixture, not data');
    expect(html).toMatch(/<details id="provenance"><summary>Provenance/);
    expect(html).toContain('ab'.repeat(32));
    expect(html).toContain('0.0.0-test');
  });

  it('lists at most rankingLimit rows in the page and says where the rest are', () => {
    const page = renderHtml(model, { embedFont: false, rankingLimit: 2 });
    const table = /<table id="ranking">[\s\S]*?<\/table>/.exec(page)![0];
    expect(table.match(/<tr>/g)!.length).toBe(1 + 2);
    expect(page).toContain(`The best 2 of ${HOSTILE.length} candidates are listed; ranking.csv beside this report lists all.`);
  });

  it('prefixes the ids of inline SVGs so clip paths of different plots cannot collide', () => {
    expect(html).toContain('id="p-clip1"');
    expect(html).toContain('url(#p-clip1)');
    expect(inlineSvg('<svg xmlns="http://www.w3.org/2000/svg" width="1" height="2" viewBox="0 0 1 2"></svg>')).toBe('<svg role="img" viewBox="0 0 1 2"></svg>');
  });
});

describe('writeReport', () => {
  let dir: string;
  let written: WrittenReport;
  beforeAll(async () => {
    dir = tempDir();
    written = await writeReport(JSON.parse(JSON.stringify(fabricatedRank(['tetrahedral site', 'octahedral site', HOSTILE[3]]))), join(dir, 'out'));
  });

  it('writes report.html, the JSON, the ranking tables, per-fit tables and SVG/PNG plots', () => {
    const expected = [
      'report.html', 'rank.json', 'ranking.csv', 'ranking.md', 'ranking.tex',
      'fits/01-tetrahedral-site.csv', 'fits/03-etc-passwd-b-bold-b.tex',
      'plots/fit-k.svg', 'plots/fit-k.png', 'plots/fit-r.svg', 'plots/fit-r.png', 'plots/scores.svg', 'plots/scores.png',
      'plots/shells-01-tetrahedral-site.svg',
    ];
    for (const f of expected) {
      expect(written.files).toContain(f);
      expect(existsSync(join(dir, 'out', f))).toBe(true);
    }
    // no file escaped the output folder
    for (const f of written.files) expect(f).not.toMatch(/\.\./);
    const html = readFileSync(join(dir, 'out', 'report.html'), 'utf8');
    expect(html.match(/<figure id="plot-/g)?.length).toBe(written.files.filter((f) => f.endsWith('.svg')).length);
    expect(html).not.toMatch(/https?:\/\//);
  });

  it('makes file names safe', () => {
    expect(fileSlug('../../etc/passwd')).toBe('etc-passwd');
    expect(fileSlug('<<>>')).toBe('candidate');
    expect(fileSlug('Zn₂ site ä')).toMatch(/^[a-z0-9-]+$/);
  });

  it('refuses to overwrite a protected input', async () => {
    const out = tempDir();
    const input = join(out, 'report.html');
    writeFileSync(input, 'mine');
    await expect(writeReport(fabricatedFit('a', 0), out, { protectedInputs: [input], png: false })).rejects.toThrow(/refusing to overwrite an input file/);
    expect(readFileSync(input, 'utf8')).toBe('mine');
  });
});

describe('shellrank report (CLI)', () => {
  it('reports a fit result and names the output', async () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'fit.json'), JSON.stringify(fabricatedFit('tetrahedral site', 0)));
    const run = await cli(['report', 'fit.json', '--no-png'], dir);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/wrote .*fit-report\/report\.html \(fit report, \d+ files\)/);
    expect(existsSync(join(dir, 'fit-report', 'parameters.tex'))).toBe(true);
    expect(existsSync(join(dir, 'fit-report', 'plots', 'fit-k.png'))).toBe(false);
  });

  it('exits 2 naming the file when the JSON is neither a fit nor a rank result', async () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'other.json'), '{"format": "shellrank-chi"}');
    const run = await cli(['report', 'other.json', '--out', 'x'], dir);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/other\.json: is neither a fit result/);
  });

  it('exits 2 with the line of a JSON syntax error', async () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'broken.json'), '{"stats": {},\n "params": [1,\n 2 3]}');
    const run = await cli(['report', 'broken.json'], dir);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/broken\.json:3: not valid JSON/);
  });
});
