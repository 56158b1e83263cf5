/**
 * Values with uncertainties in conventional significant figures, and the ranking and fit tables
 * as CSV, Markdown and LaTeX.
 *
 * Rounding rule (default `'pdg'`): the Particle Data Group's rule, stated in the introduction to
 * the Review of Particle Physics (R. L. Workman et al., Prog. Theor. Exp. Phys. 2022, 083C01,
 * section "Rounding"): take the three highest-order digits of the error; from 100 to 354 keep two
 * significant digits, from 355 to 949 keep one, from 950 to 999 round the error up to 1000 and
 * keep two; the value is then given to the same decimal place as the error.
 * The simpler `'leading-digit'` rule keeps two significant digits when the error's leading digit
 * is 1 or 2 and one otherwise (common practice, no source); when rounding a 9.x error to one digit
 * carries it to 10, two digits are kept, as the PDG rule does.
 *
 * Notation: the concise form with the uncertainty in parentheses referred to the last digits of the
 * value, "100.02147(35)", and the "±" form, "100.02147 ± 0.00035", both as in the BIPM Guide to the
 * Expression of Uncertainty in Measurement (JCGM 100:2008), section 7.2.2. When the last kept digit
 * lies left of the decimal point the parenthesis holds the error in the value's own units
 * ("12340(120)"), so it cannot be misread.
 *
 * Tables: CSV per RFC 4180 (fields with commas, quotes or line breaks quoted, quotes doubled), and
 * text cells that a spreadsheet would run as a formula (starting with = + - @ tab or CR) prefixed
 * with an apostrophe (OWASP, "CSV Injection"); Markdown pipe tables with | \ < > escaped; LaTeX in
 * the booktabs style (\toprule, \midrule, \bottomrule; S. Fear, the booktabs package documentation)
 * with the ten LaTeX special characters escaped.
 */
import type { CandidateView, FitStatistics, ValueWithError } from './types';

/** Which digit-count rule {@link formatWithError} uses. */
export type RoundingRule = 'pdg' | 'leading-digit';

export interface FormatOptions {
  /** Default 'pdg'. */
  rule?: RoundingRule;
  /** Significant digits of a value whose error is unknown or zero; default 4. */
  digitsWithoutError?: number;
  /** The plus-minus sign; default '±' (LaTeX tables pass '$\\pm$'). */
  plusMinus?: string;
}

/**
 * Fixed notation is used while the last kept digit lies between 10^-7 and 10^5; beyond that both
 * numbers share a power of ten written "e<power>" ("1.000(30)e-7", "(1.000 ± 0.030)e-7").
 */
const SCIENTIFIC_BELOW = 7;
const SCIENTIFIC_ABOVE = 5;

/** A value and its error as text, in both notations. */
export interface FormattedValue {
  /** 'measured': a positive finite error; 'exact': error 0; 'unknown': error missing, NaN, Infinity or negative; 'missing': no value. */
  kind: 'measured' | 'exact' | 'unknown' | 'missing';
  /** The value rounded to the error's last digit ("2.548"). */
  value: string;
  /** The rounded error ("0.004"), or null when unknown. */
  error: string | null;
  /** Concise notation "2.548(4)"; the bare value when the error is not measured. */
  parenthesis: string;
  /** "2.548 ± 0.004"; the bare value when the error is not measured. */
  plusMinus: string;
  /** Number of decimals kept (negative: rounded to tens, hundreds...). */
  decimals: number | null;
}

/** Rounded error: its significant digits as an integer and the power of ten of the last digit. */
interface RoundedError { digits: number; lastPower: number }

/**
 * A finite number as a decimal: |x| = units * 10^exponent with `units` the digits of the shortest
 * string that reads back as x (JavaScript's Number-to-String). Rounding works on these decimal
 * digits, so 0.00035 rounds to 0.0004 at one digit as a person would, not to 0.0003 as the binary
 * value 0.000349999... would under toFixed.
 */
interface Decimal { negative: boolean; units: bigint; exponent: number }

function toDecimal(x: number): Decimal {
  const [mantissa, exp = '0'] = String(Math.abs(x)).split('e');
  const [whole, fraction = ''] = mantissa.split('.');
  return { negative: x < 0, units: BigInt(whole + fraction), exponent: Number(exp) - fraction.length };
}

/** Power of ten of the leading digit of a non-zero decimal. */
function leadingPower(d: Decimal): number {
  return d.exponent + d.units.toString().length - 1;
}

/** |d| rounded to a whole number of 10^power, half away from zero. */
function unitsAtPower(d: Decimal, power: number): bigint {
  const drop = power - d.exponent;
  if (drop <= 0) return d.units * 10n ** BigInt(-drop);
  const scale = 10n ** BigInt(drop);
  const kept = d.units / scale;
  return d.units % scale * 2n >= scale ? kept + 1n : kept;
}

/** Fixed notation of units * 10^power (sign added by the caller). */
function unitsToText(units: bigint, power: number): string {
  if (power >= 0) return (units * 10n ** BigInt(power)).toString();
  const digits = units.toString().padStart(-power + 1, '0');
  return `${digits.slice(0, digits.length + power)}.${digits.slice(digits.length + power)}`;
}

/** The first three significant digits of a non-zero decimal, truncated (the PDG rule reads 0.3549 as 354). */
function leadingThree(d: Decimal): number {
  return Number(d.units.toString().padEnd(3, '0').slice(0, 3));
}

/** The rounded error per the chosen rule (error > 0, finite). */
export function roundError(error: number, rule: RoundingRule = 'pdg'): RoundedError {
  const d = toDecimal(error);
  const top = leadingPower(d);
  if (rule === 'pdg') {
    const three = leadingThree(d);
    if (three >= 950) return { digits: 10, lastPower: top }; // "round up to 1000 and keep two significant digits"
    const keep = three <= 354 ? 2 : 1;
    return { digits: Number(unitsAtPower(d, top - keep + 1)), lastPower: top - keep + 1 };
  }
  const leading = Number(d.units.toString()[0]);
  if (leading === 1 || leading === 2) return { digits: Number(unitsAtPower(d, top - 1)), lastPower: top - 1 };
  const one = Number(unitsAtPower(d, top));
  return one === 10 ? { digits: 10, lastPower: top } : { digits: one, lastPower: top }; // 9.6 -> 10: two digits, "10"
}

/** The value rounded to 10^lastPower, as text (no exponent notation, no "-0"). */
function valueAtPower(value: number, lastPower: number, shift = 0): string {
  const units = value === 0 ? 0n : unitsAtPower(toDecimal(value), lastPower + shift);
  const text = unitsToText(units, lastPower);
  return value < 0 && units !== 0n ? `-${text}` : text;
}

function errorText(e: RoundedError): string {
  return unitsToText(BigInt(e.digits), e.lastPower);
}

function bareValue(value: number, digits: number): string {
  if (value === 0) return '0';
  const magnitude = Math.abs(value);
  if (magnitude >= 1e6 || magnitude < 1e-4) return value.toExponential(digits - 1);
  return String(Number(value.toPrecision(digits)));
}

function nonFinite(value: number): string {
  if (Number.isNaN(value)) return 'NaN';
  return value > 0 ? 'Infinity' : '-Infinity';
}

/**
 * A value with its standard uncertainty in conventional significant figures.
 *
 *     formatWithError(2.5483, 0.0041)  // { parenthesis: "2.548(4)", plusMinus: "2.548 ± 0.004", ... }
 *     formatWithError(0.0996, 0.0051)  // "0.100(5)" (the rounding carries into the value)
 *     formatWithError(2.5, 0)          // exact: "2.5"; formatWithError(2.5, NaN): unknown: "2.5"
 *
 * Edge cases: a missing/NaN value gives kind 'missing' and "n/a"; an infinite value is written
 * "Infinity"; an error that is NaN, infinite, negative, null or undefined gives kind 'unknown' and
 * the value to `digitsWithoutError` significant digits; an error of 0 gives kind 'exact'.
 */
export function formatWithError(value: number | null | undefined, error: number | null | undefined, options: FormatOptions = {}): FormattedValue {
  const pm = options.plusMinus ?? '±';
  const digits = options.digitsWithoutError ?? 4;
  if (value === null || value === undefined || Number.isNaN(value)) {
    return { kind: 'missing', value: 'n/a', error: null, parenthesis: 'n/a', plusMinus: 'n/a', decimals: null };
  }
  if (!Number.isFinite(value)) {
    const text = nonFinite(value);
    return { kind: 'unknown', value: text, error: null, parenthesis: text, plusMinus: text, decimals: null };
  }
  if (error === null || error === undefined || !Number.isFinite(error) || error < 0) {
    const text = bareValue(value, digits);
    return { kind: 'unknown', value: text, error: null, parenthesis: text, plusMinus: text, decimals: null };
  }
  if (error === 0) {
    const text = bareValue(value, digits);
    return { kind: 'exact', value: text, error: '0', parenthesis: text, plusMinus: text, decimals: null };
  }
  const rounded = roundError(error, options.rule ?? 'pdg');
  if (rounded.lastPower < -SCIENTIFIC_BELOW || rounded.lastPower > SCIENTIFIC_ABOVE) {
    // a common power of ten: that of the value's leading digit, or of the error's when the value is smaller
    const errorTop = rounded.lastPower + String(rounded.digits).length - 1;
    const valueTop = value === 0 ? errorTop : leadingPower(toDecimal(value));
    const power = Math.max(valueTop, errorTop);
    const scaled: RoundedError = { digits: rounded.digits, lastPower: rounded.lastPower - power };
    const valueText = valueAtPower(value, scaled.lastPower, power);
    const errText = errorText(scaled);
    const inParentheses = scaled.lastPower >= 0 ? errText : String(scaled.digits);
    return {
      kind: 'measured',
      value: `${valueText}e${power}`,
      error: `${errText}e${power}`,
      parenthesis: `${valueText}(${inParentheses})e${power}`,
      plusMinus: `(${valueText} ${pm} ${errText})e${power}`,
      decimals: -rounded.lastPower,
    };
  }
  const valueText = valueAtPower(value, rounded.lastPower);
  const errText = errorText(rounded);
  const inParentheses = rounded.lastPower >= 0 ? errText : String(rounded.digits);
  return {
    kind: 'measured',
    value: valueText,
    error: errText,
    parenthesis: `${valueText}(${inParentheses})`,
    plusMinus: `${valueText} ${pm} ${errText}`,
    decimals: -rounded.lastPower,
  };
}

/** A number alone, to `digits` significant digits; "n/a" for null/NaN. */
export function formatNumber(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || Number.isNaN(value)) return 'n/a';
  if (!Number.isFinite(value)) return nonFinite(value);
  return bareValue(value, digits);
}

/** A p-value: "< 0.001" below a thousandth, otherwise 2 significant digits. */
export function formatPValue(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return 'n/a';
  if (p < 0.001) return '< 0.001';
  return String(Number(p.toPrecision(2)));
}

// ---------------------------------------------------------------------------------------------
// Table model and renderers

/** One cell: the text for Markdown/HTML, and optional variants for LaTeX and CSV. */
export interface TableCell {
  text: string;
  /** LaTeX source; default: `text` escaped. */
  latex?: string;
  /** CSV field; default: `text`. Numbers in CSV are full precision, not rounded. */
  csv?: string;
}

export interface TableColumn {
  key: string;
  title: string;
  /** LaTeX title source; default: `title` escaped. */
  titleLatex?: string;
  align: 'left' | 'right' | 'center';
}

/** A table: columns, rows of cells (one per column), and an optional caption. */
export interface Table {
  columns: TableColumn[];
  rows: TableCell[][];
  caption?: string;
  /** Extra CSV-only columns (machine-readable numbers), appended after the cells. */
  csvExtra?: { titles: string[]; rows: string[][] };
}

/** Escape the ten LaTeX special characters (& % $ # _ { } ~ ^ \) for text mode. */
export function escapeLatex(text: string): string {
  return text.replace(/[\\&%$#_{}~^]/g, (c) => {
    switch (c) {
      case '\\': return '\\textbackslash{}';
      case '~': return '\\textasciitilde{}';
      case '^': return '\\textasciicircum{}';
      default: return `\\${c}`;
    }
  });
}

/** Escape text for a Markdown pipe-table cell: | \ ` * _ and < > (so no HTML gets through). */
export function escapeMarkdown(text: string): string {
  return text
    .replace(/[\\|`*_[\]]/g, (c) => `\\${c}`)
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/\r?\n/g, ' ');
}

const NUMBER_LIKE = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/;

/** One CSV field per RFC 4180, with formula-looking text neutralised (OWASP "CSV Injection"). */
export function csvField(text: string): string {
  let t = text;
  if (/^[=+\-@\t\r]/.test(t) && !NUMBER_LIKE.test(t)) t = `'${t}`;
  return /[",\r\n]/.test(t) ? `"${t.replace(/"/g, '""')}"` : t;
}

/** CSV with a header line; CRLF line ends as RFC 4180 specifies. */
export function tableToCsv(table: Table): string {
  const titles = [...table.columns.map((c) => c.title), ...(table.csvExtra?.titles ?? [])];
  const lines = [titles.map(csvField).join(',')];
  table.rows.forEach((row, i) => {
    const fields = [...row.map((cell) => cell.csv ?? cell.text), ...(table.csvExtra?.rows[i] ?? [])];
    lines.push(fields.map(csvField).join(','));
  });
  return lines.join('\r\n') + '\r\n';
}

/** A Markdown pipe table (GitHub-flavoured), caption as a bold line above. */
export function tableToMarkdown(table: Table): string {
  const align = (a: TableColumn['align']) => (a === 'right' ? '---:' : a === 'center' ? ':---:' : ':---');
  const lines: string[] = [];
  if (table.caption) lines.push(`**${escapeMarkdown(table.caption)}**`, '');
  lines.push(`| ${table.columns.map((c) => escapeMarkdown(c.title)).join(' | ')} |`);
  lines.push(`| ${table.columns.map((c) => align(c.align)).join(' | ')} |`);
  for (const row of table.rows) lines.push(`| ${row.map((c) => escapeMarkdown(c.text)).join(' | ')} |`);
  return lines.join('\n') + '\n';
}

export interface LatexOptions {
  /** \label{...} key; escaped of anything but letters, digits and : - . */
  label?: string;
}

/** A booktabs table inside a table float (needs \usepackage{booktabs}). */
export function tableToLatex(table: Table, options: LatexOptions = {}): string {
  const spec = table.columns.map((c) => c.align[0]).join('');
  const lines = ['\\begin{table}', '  \\centering'];
  if (table.caption) lines.push(`  \\caption{${escapeLatex(table.caption)}}`);
  if (options.label) lines.push(`  \\label{${options.label.replace(/[^A-Za-z0-9:.-]/g, '-')}}`);
  lines.push(`  \\begin{tabular}{${spec}}`, '    \\toprule');
  lines.push(`    ${table.columns.map((c) => c.titleLatex ?? escapeLatex(c.title)).join(' & ')} \\\\`);
  lines.push('    \\midrule');
  for (const row of table.rows) lines.push(`    ${row.map((c) => c.latex ?? escapeLatex(c.text)).join(' & ')} \\\\`);
  lines.push('    \\bottomrule', '  \\end{tabular}', '\\end{table}');
  return lines.join('\n') + '\n';
}

// ---------------------------------------------------------------------------------------------
// The ranking and fit tables

/** Full-precision CSV text of a number ("" when missing). */
function csvNumber(x: number | null | undefined): string {
  return x === null || x === undefined || Number.isNaN(x) ? '' : String(x);
}

function numberCell(x: number | null | undefined, digits = 4): TableCell {
  const text = formatNumber(x, digits);
  return { text, csv: csvNumber(x), latex: text === 'n/a' ? 'n/a' : escapeLatex(text).replace(/^-/, '$-$') };
}

function textCell(text: string): TableCell {
  return { text };
}

/** LaTeX of a formatted value: parentheses notation, minus sign in math mode. */
function latexValue(f: FormattedValue): string {
  return f.parenthesis === 'n/a' ? 'n/a' : f.parenthesis.replace(/^-/, '$-$');
}

/** Statistic column definitions shared by the ranking and statistics tables. */
const STATISTICS: { key: keyof FitStatistics; title: string; titleLatex: string; digits: number }[] = [
  { key: 'rFactor', title: 'R-factor', titleLatex: 'R-factor', digits: 3 },
  { key: 'reducedChiSquare', title: 'reduced χ²', titleLatex: 'reduced $\\chi^2$', digits: 3 },
  { key: 'chiSquare', title: 'χ²', titleLatex: '$\\chi^2$', digits: 4 },
  { key: 'misfitRatio', title: 'misfit / noise', titleLatex: 'misfit / noise', digits: 3 },
  { key: 'aic', title: 'AIC', titleLatex: 'AIC', digits: 4 },
  { key: 'bic', title: 'BIC', titleLatex: 'BIC', digits: 4 },
  { key: 'nIndependent', title: 'N_ind', titleLatex: '$N_\\mathrm{ind}$', digits: 3 },
  { key: 'nVaried', title: 'N_var', titleLatex: '$N_\\mathrm{var}$', digits: 3 },
];

/**
 * The ranking table: rank, candidate, verdict, R-factor, reduced chi-square, AIC, BIC, p-value
 * against the best, independent points and varied parameters. The CSV adds the file.
 */
export function rankingTable(candidates: readonly CandidateView[], caption = 'Ranking of the candidate structures'): Table {
  const stats = STATISTICS.filter((s) => s.key !== 'chiSquare' && s.key !== 'misfitRatio');
  const columns: TableColumn[] = [
    { key: 'rank', title: 'Rank', align: 'right' },
    { key: 'name', title: 'Candidate', align: 'left' },
    { key: 'verdict', title: 'Verdict', align: 'left' },
    ...stats.map((s) => ({ key: s.key, title: s.title, titleLatex: s.titleLatex, align: 'right' as const })),
    { key: 'pValue', title: 'p (vs best)', titleLatex: '$p$ (vs best)', align: 'right' },
  ];
  const rows = candidates.map((c) => [
    { text: String(c.rank) },
    textCell(c.name),
    textCell(c.verdict),
    ...stats.map((s) => numberCell(c.stats[s.key], s.digits)),
    { text: formatPValue(c.pValue), csv: csvNumber(c.pValue), latex: escapeLatex(formatPValue(c.pValue)).replace('<', '$<$') },
  ]);
  return { columns, rows, caption, csvExtra: { titles: ['file'], rows: candidates.map((c) => [c.file ?? '']) } };
}

/** Units and symbols of the fit parameters, in text and LaTeX. */
const PARAMETER_INFO: Record<string, { text: string; latex: string; unit: string; unitLatex: string }> = {
  s0sq: { text: 's0sq (S0²)', latex: 's0sq ($S_0^2$)', unit: '', unitLatex: '' },
  e0: { text: 'e0 (ΔE0)', latex: 'e0 ($\\Delta E_0$)', unit: 'eV', unitLatex: 'eV' },
  n: { text: 'n', latex: '$N$', unit: '', unitLatex: '' },
  r: { text: 'r', latex: '$R$', unit: 'Å', unitLatex: '\\AA{}' },
  msrd: { text: 'msrd (σ²)', latex: 'msrd ($\\sigma^2$)', unit: 'Å²', unitLatex: '\\AA$^2$' },
  c3: { text: 'c3', latex: '$C_3$', unit: 'Å³', unitLatex: '\\AA$^3$' },
  c4: { text: 'c4', latex: '$C_4$', unit: 'Å⁴', unitLatex: '\\AA$^4$' },
};

function parameterRow(name: string, shell: string, v: ValueWithError): TableCell[] {
  const info = PARAMETER_INFO[name];
  const f = formatWithError(v.value, v.error);
  const state = v.state === 'tied' && v.expression ? `tied: ${v.expression}` : v.state ?? '';
  return [
    { text: info ? info.text : name, latex: info ? info.latex : escapeLatex(name), csv: name },
    textCell(shell),
    { text: f.parenthesis, latex: latexValue(f), csv: csvNumber(v.value) },
    { text: f.plusMinus, latex: f.kind === 'measured' ? `${f.value.replace(/^-/, '$-$')} $\\pm$ ${f.error}` : latexValue(f), csv: csvNumber(v.error) },
    { text: info?.unit ?? '', latex: info?.unitLatex ?? '' },
    textCell(state),
  ];
}

/**
 * One fit's parameter table: global parameters (s0sq, e0, any others), then per shell n, r, msrd
 * and c3/c4 when present. Values with errors in both notations; CSV columns carry the full-precision
 * value and error.
 */
export function fitParameterTable(candidate: CandidateView, caption = `Fitted parameters: ${candidate.name}`): Table {
  const columns: TableColumn[] = [
    { key: 'parameter', title: 'Parameter', align: 'left' },
    { key: 'shell', title: 'Shell', align: 'left' },
    { key: 'value', title: 'Value', align: 'right' },
    { key: 'valuePm', title: 'Value ± error', titleLatex: 'Value $\\pm$ error', align: 'right' },
    { key: 'unit', title: 'Unit', align: 'left' },
    { key: 'state', title: 'State', align: 'left' },
  ];
  const rows: TableCell[][] = [];
  const globals = Object.keys(candidate.params).sort((a, b) => order(a) - order(b) || a.localeCompare(b));
  for (const name of globals) rows.push(parameterRow(name, '', candidate.params[name]));
  for (const shell of candidate.shells) {
    const shellName = shell.label.split(/\s+/).includes(shell.species) ? shell.label : `${shell.label} (${shell.species})`;
    rows.push(parameterRow('n', shellName, shell.n));
    rows.push(parameterRow('r', shellName, shell.r));
    rows.push(parameterRow('msrd', shellName, shell.msrd));
    if (shell.c3) rows.push(parameterRow('c3', shellName, shell.c3));
    if (shell.c4) rows.push(parameterRow('c4', shellName, shell.c4));
  }
  return { columns, rows, caption };
}

function order(name: string): number {
  return name === 's0sq' ? 0 : name === 'e0' ? 1 : 2;
}

/** One fit's statistics as a two-column table (statistic, value). */
export function fitStatisticsTable(candidate: CandidateView, caption = `Fit statistics: ${candidate.name}`): Table {
  return {
    columns: [
      { key: 'statistic', title: 'Statistic', align: 'left' },
      { key: 'value', title: 'Value', align: 'right' },
    ],
    rows: STATISTICS.map((s) => [{ text: s.title, latex: s.titleLatex, csv: s.key }, numberCell(candidate.stats[s.key], s.digits)]),
    caption,
  };
}

/**
 * CSV of a fit's parameters for machines: parameter, shell, species, value, error, state, and the
 * rounded text. Full-precision numbers.
 */
export function fitParameterCsv(candidate: CandidateView): string {
  const table = fitParameterTable(candidate);
  // columns: Parameter, Shell, Value -> raw value, Value ± error -> raw error, Unit, State
  const csvTable: Table = {
    columns: [
      { key: 'parameter', title: 'parameter', align: 'left' },
      { key: 'shell', title: 'shell', align: 'left' },
      { key: 'value', title: 'value', align: 'right' },
      { key: 'error', title: 'error', align: 'right' },
      { key: 'unit', title: 'unit', align: 'left' },
      { key: 'state', title: 'state', align: 'left' },
    ],
    rows: table.rows,
    csvExtra: { titles: ['rounded'], rows: table.rows.map((r) => [r[2].text]) },
  };
  return tableToCsv(csvTable);
}
