/**
 * ranking.csv never starts a text cell with a character that a spreadsheet reads as a formula
 * (= + - @, tab, carriage return): such cells get a leading apostrophe, as the OWASP "CSV
 * Injection" guidance recommends (from memory). Numbers, including negative ones, stay numbers.
 */
import { describe, expect, it } from 'vitest';
import { rankingTable } from '../src/rank/output';
import type { AssembledRanking, RankingEntry } from '../src/rank/run';

function entry(name: string, rank: number, aic: number, equivalentTo?: string): RankingEntry {
  const e = {
    key: name, index: rank, name, file: name, rank, verdict: 'best', stage: 'prescreen', test: null, ok: true,
    stats: { rFactor: 0.01, chiSquare: 10, reducedChiSquare: 1.2, nIndependent: 12, nVaried: 4, nPoints: 100, degreesOfFreedom: 8, aic, bic: aic + 3 },
    prescreenStats: null, records: { prescreen: { file: 'x', offset: 0, length: 0 } },
  } as unknown as RankingEntry;
  if (equivalentTo) e.equivalentTo = equivalentTo;
  return e;
}

describe('formula injection in ranking.csv', () => {
  it('prefixes names starting with = + - @ and keeps negative numbers as they are', () => {
    const names = ['=HYPERLINK("http://example.invalid","x").xyz', '+1+1.xyz', '-2+3.xyz', '@SUM(A1).xyz', 'plain.xyz'];
    const ranking = { entries: names.map((n, i) => entry(n, i + 1, -12.5)), candidates: names.length, refined: 0, shards: 1 } as unknown as AssembledRanking;
    const rows = rankingTable(ranking, 'csv').trimEnd().split('\n').slice(1);
    const cells = rows.map((r) => r.match(/("([^"]|"")*"|[^,]*)(,|$)/g)!.map((c) => c.replace(/,$/, '')));
    expect(cells.map((c) => c[1])).toEqual([`"'=HYPERLINK(""http://example.invalid"",""x"").xyz"`, "'+1+1.xyz", "'-2+3.xyz", "'@SUM(A1).xyz", 'plain.xyz']);
    // the AIC column: a negative number, not text
    for (const c of cells) expect(c[7]).toBe('-12.5');
  });

  it('an equivalent candidate\'s rank "=1" is written so that it is not a formula', () => {
    const ranking = { entries: [entry('a.xyz', 1, 5), entry('b.xyz', 1, 5, 'a.xyz')], candidates: 2, refined: 0, shards: 1 } as unknown as AssembledRanking;
    const rows = rankingTable(ranking, 'csv').trimEnd().split('\n');
    expect(rows[2].startsWith("'=1,")).toBe(true);
  });
});
