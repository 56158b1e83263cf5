import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import {
  csvField,
  escapeLatex,
  escapeMarkdown,
  fitParameterCsv,
  fitParameterTable,
  formatPValue,
  formatWithError,
  rankingTable,
  roundError,
  tableToCsv,
  tableToLatex,
  tableToMarkdown,
} from '../src/report/tables';
import { reportModelFrom } from '../src/report/types';
import { fabricatedRank } from './helpers/report-fixtures';

const concise = (v: number | null, e: number | null | undefined, rule?: 'pdg' | 'leading-digit') => formatWithError(v, e, { rule }).parenthesis;
const pm = (v: number, e: number) => formatWithError(v, e).plusMinus;

describe('formatWithError: worked examples from published sources', () => {
  it('gives the PDG examples: 0.827 ± 0.119 -> 0.83 ± 0.12 and 0.827 ± 0.367 -> 0.8 ± 0.4', () => {
    // Particle Data Group, Review of Particle Physics, Introduction, "Rounding" (from memory):
    // "0.827 ± 0.119 would appear as 0.83 ± 0.12, while 0.827 ± 0.367 would turn into 0.8 ± 0.4"
    expect(pm(0.827, 0.119)).toBe('0.83 ± 0.12');
    expect(pm(0.827, 0.367)).toBe('0.8 ± 0.4');
  });

  it('gives the GUM 7.2.2 concise form 100.02147(35) for m = 100.02147 g, u = 0.35 mg', () => {
    // JCGM 100:2008 (GUM) section 7.2.2, forms (2) and (3) (from memory): "m_S = 100,021 47(35) g"
    // and "100,021 47 g ± 0,000 35 g" (written here without the digit grouping)
    expect(concise(100.02147, 0.00035)).toBe('100.02147(35)');
    expect(pm(100.02147, 0.00035)).toBe('100.02147 ± 0.00035');
  });

  it('gives the issue 7 example 2.548(4) and 2.548 ± 0.004 for 2.5483 ± 0.0041', () => {
    // the two usual notations, 2.548(4) Å and 2.548 +- 0.004 (common practice, no source); PDG rule: leading digits 410 -> one digit
    expect(concise(2.5483, 0.0041)).toBe('2.548(4)');
    expect(pm(2.5483, 0.0041)).toBe('2.548 ± 0.004');
  });

  it('reproduces CODATA 2018 values in concise notation (two-digit uncertainties)', () => {
    // CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)), from memory. Each quoted
    // uncertainty has leading digits <= 354, so the PDG rule keeps the same two digits CODATA does.
    expect(concise(6.6743e-11, 0.00015e-11)).toBe('6.67430(15)e-11'); // G, m^3 kg^-1 s^-2: trailing zero kept
    expect(concise(9.1093837015e-31, 0.0000000028e-31)).toBe('9.1093837015(28)e-31'); // m_e, kg
    expect(concise(7.2973525693e-3, 0.0000000011e-3)).toBe('7.2973525693(11)e-3'); // fine-structure constant
    expect(concise(10973731.56816, 0.000021)).toBe('10973731.568160(21)'); // Rydberg constant, 1/m
  });
});

describe('formatWithError: the PDG digit rule at its boundaries', () => {
  // Rule (PDG, Review of Particle Physics, "Rounding"): three highest-order digits 100-354 -> two
  // significant digits; 355-949 -> one; 950-999 -> round up to 1000 and keep two.
  it('keeps two digits from 100 to 354 and one from 355 to 949', () => {
    expect(concise(3, 0.1)).toBe('3.00(10)');
    expect(concise(3, 0.354)).toBe('3.00(35)');
    expect(concise(3, 0.3549)).toBe('3.00(35)'); // the three highest digits are 354 (not rounded up to 355)
    expect(concise(3, 0.355)).toBe('3.0(4)');
    expect(concise(3, 0.949)).toBe('3.0(9)');
  });

  it('rounds 950-999 up to 1000 with two digits', () => {
    expect(concise(1.5, 0.0096)).toBe('1.500(10)');
    expect(concise(1.5, 0.00999)).toBe('1.500(10)');
    expect(concise(12.34, 0.95)).toBe('12.3(10)');
  });

  it('carries the rounding into the value: 0.0996 ± 0.0051 -> 0.100(5)', () => {
    // by hand: error 0.0051 -> 510 -> one digit, 0.005; value to 3 decimals, 0.0996 -> 0.100
    expect(concise(0.0996, 0.0051)).toBe('0.100(5)');
    expect(pm(0.0996, 0.0051)).toBe('0.100 ± 0.005');
    expect(concise(9.99996, 0.0012)).toBe('10.0000(12)'); // 9.99996 to 4 decimals carries into the units
  });

  it('rounds on the decimal digits, half away from zero (0.00035 -> 0.0004 at one digit)', () => {
    // 0.00035 is 3.4999...e-4 in binary; a person rounds the written digits 35 up
    expect(roundError(0.00035, 'leading-digit')).toEqual({ digits: 4, lastPower: -4 });
    expect(concise(2.5, 0.125)).toBe('2.50(13)');
    expect(concise(1.005, 0.005)).toBe('1.005(5)');
    expect(concise(1.0005, 0.005)).toBe('1.001(5)');
  });

  it('formats negative values with the same digits as positive ones', () => {
    expect(concise(-2.5483, 0.0041)).toBe('-2.548(4)');
    expect(pm(-0.827, 0.119)).toBe('-0.83 ± 0.12');
    expect(concise(-0.0004, 0.005)).toBe('0.000(5)'); // no "-0.000"
  });

  it('writes errors above the units digit in the value\'s own units', () => {
    expect(concise(12345, 123)).toBe('12350(120)');
    expect(concise(1234.5, 12)).toBe('1235(12)'); // last digit is the units digit: (12) means ± 12
    expect(pm(12345, 123)).toBe('12350 ± 120');
  });
});

describe('formatWithError: the leading-digit rule', () => {
  it('keeps two digits when the leading digit is 1 or 2, one otherwise, two after a 9 -> 10 carry', () => {
    expect(concise(2.5483, 0.0149, 'leading-digit')).toBe('2.548(15)');
    expect(concise(2.5483, 0.029, 'leading-digit')).toBe('2.548(29)');
    expect(concise(2.5483, 0.031, 'leading-digit')).toBe('2.55(3)');
    expect(concise(1.5, 0.0096, 'leading-digit')).toBe('1.500(10)');
  });
});

describe('formatWithError: missing and degenerate errors', () => {
  it('treats an error of 0 as exact and shows the value alone', () => {
    const f = formatWithError(0.9, 0);
    expect(f.kind).toBe('exact');
    expect(f.parenthesis).toBe('0.9');
    expect(f.error).toBe('0');
  });

  it('shows the value alone, to 4 significant digits, when the error is NaN, infinite, negative or missing', () => {
    for (const e of [Number.NaN, Number.POSITIVE_INFINITY, -0.01, null, undefined]) {
      const f = formatWithError(2.548312, e);
      expect(f.kind).toBe('unknown');
      expect(f.parenthesis).toBe('2.548');
      expect(f.error).toBeNull();
    }
  });

  it('says n/a for a missing value and names infinities', () => {
    expect(formatWithError(null, 0.1).parenthesis).toBe('n/a');
    expect(formatWithError(Number.NaN, 0.1).kind).toBe('missing');
    expect(formatWithError(Number.POSITIVE_INFINITY, 0.1).parenthesis).toBe('Infinity');
    expect(formatWithError(Number.NEGATIVE_INFINITY, 0.1).parenthesis).toBe('-Infinity');
  });

  it('formats p-values with a floor of < 0.001', () => {
    expect(formatPValue(0.0001)).toBe('< 0.001');
    expect(formatPValue(0.3149)).toBe('0.31');
    expect(formatPValue(null)).toBe('n/a');
  });
});

describe('formatWithError: properties on random input', () => {
  it('keeps 1 or 2 error digits and a value within half a last digit of the true value', () => {
    // the rule itself (PDG): the shown error has one or two significant digits, the value is the
    // true value rounded to the error's last digit
    fc.assert(
      fc.property(
        fc.double({ min: -1e4, max: 1e4, noNaN: true }),
        fc.double({ min: 1e-6, max: 1e3, noNaN: true }),
        (value, error) => {
          const f = formatWithError(value, error);
          expect(f.kind).toBe('measured');
          const match = /^(-?\d+(?:\.\d+)?)\((\d+)\)(?:e(-?\d+))?$/.exec(f.parenthesis);
          expect(match).not.toBeNull();
          const scale = match![3] ? 10 ** Number(match![3]) : 1;
          const shownValue = Number(match![1]) * scale;
          const decimals = match![1].includes('.') ? match![1].split('.')[1].length : 0;
          const unit = 10 ** -decimals * scale;
          expect(Math.abs(shownValue - value)).toBeLessThanOrEqual(unit / 2 + 1e-9 * Math.max(1, Math.abs(value)));
          const digits = match![2];
          expect(digits.length === 1 || digits.length === 2 || /^\d+0+$/.test(digits)).toBe(true);
          const shownError = Number(f.error!.replace(/e(-?\d+)$/, '')) * scale;
          // rounding to 1 digit moves the error by at most half its leading digit (up to 1.5x for 950-999 -> 1000)
          expect(shownError / error).toBeGreaterThan(0.5);
          expect(shownError / error).toBeLessThan(1.6);
        },
      ),
      { numRuns: 500, seed: 20260101 },
    );
  });
});

describe('tables: escaping per format', () => {
  it('quotes CSV fields per RFC 4180 and neutralises formulas (OWASP CSV Injection)', () => {
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField('two\nlines')).toBe('"two\nlines"');
    expect(csvField('=HYPERLINK("x")')).toBe('"\'=HYPERLINK(""x"")"');
    expect(csvField('@SUM(A1)')).toBe("'@SUM(A1)");
    expect(csvField('-2.5')).toBe('-2.5'); // a number stays a number
    expect(csvField('-1e-3')).toBe('-1e-3');
  });

  it('escapes the ten LaTeX special characters', () => {
    expect(escapeLatex('a&b%c$d#e_f{g}h~i^j\\k')).toBe('a\\&b\\%c\\$d\\#e\\_f\\{g\\}h\\textasciitilde{}i\\textasciicircum{}j\\textbackslash{}k');
  });

  it('escapes Markdown table cells (| \\ and HTML)', () => {
    expect(escapeMarkdown('a|b')).toBe('a\\|b');
    expect(escapeMarkdown('<img src=x>')).toBe('&lt;img src=x&gt;');
    expect(escapeMarkdown('x_1*')).toBe('x\\_1\\*');
  });
});

describe('tables: ranking and parameter tables', () => {
  const model = reportModelFrom(JSON.parse(JSON.stringify(fabricatedRank(['site A', 'site_B & 50%', 'site|C', 'site D']))));

  it('renders the ranking as booktabs LaTeX with escaped names', () => {
    const tex = tableToLatex(rankingTable(model.candidates), { label: 'tab:ranking' });
    expect(tex).toContain('\\toprule');
    expect(tex).toContain('\\midrule');
    expect(tex).toContain('\\bottomrule');
    expect(tex).toContain('site\\_B \\& 50\\%');
    expect(tex).toContain('reduced $\\chi^2$');
    expect(tex).not.toMatch(/[^\\]&\s*50%/);
    // every row has as many cells as the header
    const rows = tex.split('\n').filter((l) => l.trim().endsWith('\\\\'));
    const cells = rows.map((r) => r.split(/(?<!\\)&/).length);
    expect(new Set(cells).size).toBe(1);
  });

  it('renders the ranking as Markdown with one row per candidate and escaped pipes', () => {
    const md = tableToMarkdown(rankingTable(model.candidates));
    const lines = md.trim().split('\n').filter((l) => l.startsWith('|'));
    expect(lines).toHaveLength(2 + model.candidates.length);
    expect(md).toContain('site\\|C');
  });

  it('renders the ranking as CSV with full-precision numbers and the file column', () => {
    const csv = tableToCsv(rankingTable(model.candidates));
    const lines = csv.trim().split('\r\n');
    expect(lines[0]).toBe('Rank,Candidate,Verdict,R-factor,reduced χ²,AIC,BIC,N_ind,N_var,p (vs best),file');
    expect(lines).toHaveLength(1 + model.candidates.length);
    expect(lines[2]).toContain(String(model.candidates[1].stats.rFactor)); // unrounded
  });

  it('lists s0sq, e0 and each shell\'s n, r, msrd with errors, units and states', () => {
    const table = fitParameterTable(model.candidates[0]);
    const names = table.rows.map((r) => `${r[0].csv}:${r[1].text}`);
    expect(names).toEqual(['s0sq:', 'e0:', 'n:O 1', 'r:O 1', 'msrd:O 1', 'n:Zn 2', 'r:Zn 2', 'msrd:Zn 2']); // labels that name the species are not repeated
    const r = table.rows[3];
    expect(r[2].text).toBe('1.951(12)'); // fixture r = 1.9512 ± 0.0123: 123 -> two digits
    expect(r[3].text).toBe('1.951 ± 0.012');
    expect(r[4].text).toBe('Å');
    expect(table.rows[0][2].text).toBe('0.9'); // s0sq fixed, error 0
    expect(table.rows[0][5].text).toBe('fixed');
    const tex = tableToLatex(table);
    expect(tex).toContain('1.951 $\\pm$ 0.012');
    expect(tex).toContain('\\AA{}');
    const csv = fitParameterCsv(model.candidates[0]);
    expect(csv.split('\r\n')[0]).toBe('parameter,shell,value,error,unit,state,rounded');
    expect(csv).toContain('r,O 1,1.9512,0.0123,Å,,1.951(12)');
  });
});

describe('displayNames (candidate labels in plots and tables)', () => {
  it('reduces structure paths to base names and keeps names that would collide', async () => {
    const { displayNames } = await import('../src/report/types');
    expect(displayNames(['mixture of s/a.xyz and s/b.cif', 's/a.xyz', 'traj.xyz#3'])).toEqual(['mixture of a and b', 'a', 'traj#3']);
    expect(displayNames(['x/a.xyz', 'y/a.xyz'])).toEqual(['x/a.xyz', 'y/a.xyz']);
  });
});

describe('reportModelFrom reads the rank stage JSON', () => {
  it('takes the p-value and test method from candidates[].test (fabricated two-candidate ranking)', async () => {
    const { reportModelFrom } = await import('../src/report/types');
    const model = reportModelFrom({
      candidates: [
        { name: 'a.xyz', rank: 1, verdict: 'best', test: null, stats: { rFactor: 0.01 }, fit: { stats: { rFactor: 0.01 }, params: {}, shells: [] } },
        { name: 'b.xyz', rank: 2, verdict: 'rejected', test: { method: 'F ratio', statistic: 9, pValue: 0.0004 }, stats: { rFactor: 0.1 }, fit: { stats: { rFactor: 0.1 }, params: {}, shells: [] } },
      ],
      settings: {},
      provenance: {},
    }) as unknown as { candidates: { name: string; pValue: number | null; significanceTest?: string }[] };
    expect(model.candidates[1]).toMatchObject({ name: 'b', pValue: 0.0004, significanceTest: 'F ratio' });
    expect(model.candidates[0].pValue).toBeNull();
  });
});
