/**
 * The self-contained HTML report: one file with inline CSS, the plots as inline SVG, and no
 * scripts and no external requests (a Content-Security-Policy meta element forbids them:
 * default-src 'none', with inline styles and data: fonts and images only; W3C Content Security
 * Policy Level 3). It opens offline, by double-click, and prints.
 *
 * Contents, in order: title; the caution that a structure assignment is a model comparison and
 * never replaces safety procedures; a plain-words summary; warnings; the ranking table and the
 * score chart; the overlays of data and the top candidates in k and R; each fit's parameters,
 * statistics, status, correlations and shell contributions; and, collapsible, the provenance of
 * every number (the report's input file and its SHA-256, the code version, the settings and input
 * hashes of the ranking and of every fit).
 *
 * Every string from a result (names, file names, verdicts, warnings, settings) is escaped for HTML
 * text and attributes (& < > " '), following the OWASP Cross Site Scripting Prevention Cheat Sheet
 * (rule: HTML-encode untrusted data placed in HTML content and quoted attributes).
 */
import { readFileSync } from 'node:fs';
import { formatNumber, formatPValue, fitParameterTable, fitStatisticsTable, rankingTable, type Table } from './tables';
import type { CandidateView, ReportModel, VerdictClass } from './types';
import { DEJAVU_FOLDER, OKABE_ITO, PLOT_FONT_FAMILY, VERDICT_COLOURS } from './plots';

/** The caution every report carries (design rule: say plainly where a result could mislead). */
export const CAUTION_TEXT =
  'A structure assignment from one EXAFS spectrum is a comparison between the models offered: the best ' +
  'of them can still be wrong, and structures that were not among the candidates were not tested. ' +
  'Read the verdicts together with the warnings and the statistics. For hazardous samples (radioactive, ' +
  'toxic, pyrophoric or otherwise dangerous) defer to your local rules and licensed practice; this ' +
  'report never replaces beamline or laboratory safety procedures.';

/** Escape text for HTML content and quoted attribute values. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] as string);
}

/** A plot as it goes into the page. */
export interface HtmlPlot {
  /** Anchor id (letters, digits, dashes). */
  id: string;
  title: string;
  /** Vega's SVG; the root's size attributes are replaced so it scales with the page. */
  svg: string;
  caption: string;
  notes?: string[];
  /** Relative links to the same plot as files, e.g. plots/fit-k.svg. */
  files?: string[];
  /** Candidate (name) whose section the plot belongs to; none for the overview plots. */
  candidate?: string;
}

export interface HtmlOptions {
  title?: string;
  plots?: HtmlPlot[];
  /** Embed DejaVu Sans (about 1 MB as base64) so the page renders like the PNGs; default true. */
  embedFont?: boolean;
  fontFolder?: string;
  /** The result file the report was made from, with its SHA-256. */
  input?: { file: string; sha256: string };
  /** Version of the code that wrote the report. */
  version?: string;
  /** Side files written with the report (relative paths), listed with links. */
  files?: { path: string; description: string }[];
  /** How many candidates get a detailed section; default 20. */
  detailLimit?: number;
  /** How many rows the page's ranking table shows (the CSV has all); default 500. */
  rankingLimit?: number;
  /** Notes about the report itself (e.g. font fallback). */
  notes?: string[];
}

const CSS = `
:root { --ink: #111; --muted: #555; --rule: #ccc; --band: #eef3f8; }
* { box-sizing: border-box; }
body { font-family: ${PLOT_FONT_FAMILY}; color: var(--ink); margin: 0 auto; max-width: 60rem; padding: 1.5rem; line-height: 1.45; font-size: 15px; }
h1 { font-size: 1.6rem; margin: 0 0 0.3rem; }
h2 { font-size: 1.25rem; margin: 2rem 0 0.6rem; border-bottom: 1px solid var(--rule); padding-bottom: 0.2rem; }
h3 { font-size: 1.05rem; margin: 1.2rem 0 0.4rem; }
p.sub { color: var(--muted); margin: 0 0 1rem; }
.caution { border-left: 5px solid ${OKABE_ITO.vermillion}; background: #fdf3ec; padding: 0.7rem 1rem; margin: 1rem 0; }
.warnings { border-left: 5px solid ${OKABE_ITO.orange}; background: #fdf8e8; padding: 0.5rem 1rem; }
.warnings li { margin: 0.15rem 0; }
table { border-collapse: collapse; margin: 0.5rem 0 1rem; font-size: 0.9rem; }
caption { text-align: left; font-weight: bold; padding-bottom: 0.3rem; }
th, td { padding: 0.25rem 0.6rem; text-align: left; vertical-align: top; }
thead th { border-top: 2px solid var(--ink); border-bottom: 1px solid var(--ink); }
tbody tr:last-child td { border-bottom: 2px solid var(--ink); }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.verdict { display: inline-block; width: 0.8em; height: 0.8em; border-radius: 50%; margin-right: 0.35em; vertical-align: -0.05em; }
figure { margin: 1rem 0 1.5rem; }
figure svg { width: 100%; max-width: 36rem; height: auto; display: block; }
figcaption { font-size: 0.88rem; color: var(--muted); max-width: 36rem; }
details { margin: 0.6rem 0; }
summary { cursor: pointer; font-weight: bold; }
pre { background: #f6f6f6; padding: 0.6rem; overflow-x: auto; font-size: 0.8rem; white-space: pre-wrap; word-break: break-all; }
code { font-size: 0.85em; }
.candidate { border-top: 1px solid var(--rule); margin-top: 1rem; }
.files li { font-size: 0.9rem; }
@media print { details { display: block; } body { max-width: none; } }
`;

function fontFace(folder: string): string | null {
  try {
    const data = readFileSync(`${folder}/DejaVuSans.ttf`).toString('base64');
    return `@font-face { font-family: 'DejaVu Sans'; src: url(data:font/ttf;base64,${data}) format('truetype'); font-weight: normal; font-style: normal; }`;
  } catch {
    return null;
  }
}

function tableToHtml(table: Table, id?: string): string {
  const head = table.columns.map((c) => `<th scope="col"${c.align === 'right' ? ' class="num"' : ''}>${escapeHtml(c.title)}</th>`).join('');
  const body = table.rows
    .map((row) => `<tr>${row.map((cell, i) => `<td${table.columns[i].align === 'right' ? ' class="num"' : ''}>${escapeHtml(cell.text)}</td>`).join('')}</tr>`)
    .join('\n');
  return `<table${id ? ` id="${escapeHtml(id)}"` : ''}>${table.caption ? `<caption>${escapeHtml(table.caption)}</caption>` : ''}<thead><tr>${head}</tr></thead><tbody>\n${body}\n</tbody></table>`;
}

function verdictDot(v: VerdictClass): string {
  return `<span class="verdict" style="background:${VERDICT_COLOURS[v]}" aria-hidden="true"></span>`;
}

/** The ranking table with a coloured verdict mark (colours as in the score chart). */
function rankingHtml(model: ReportModel, limit: number): string {
  const table = rankingTable(model.candidates.slice(0, limit));
  const verdictColumn = table.columns.findIndex((c) => c.key === 'verdict');
  const nameColumn = table.columns.findIndex((c) => c.key === 'name');
  const head = table.columns.map((c) => `<th scope="col"${c.align === 'right' ? ' class="num"' : ''}>${escapeHtml(c.title)}</th>`).join('');
  const body = table.rows
    .map((row, r) => {
      const c = model.candidates[r];
      const cells = row.map((cell, i) => {
        const cls = table.columns[i].align === 'right' ? ' class="num"' : '';
        if (i === verdictColumn) return `<td>${verdictDot(c.verdictClass)}${escapeHtml(cell.text)}</td>`;
        if (i === nameColumn) {
          const title = c.file ? ` title="${escapeHtml(c.file)}"` : '';
          return `<td${title}><a href="#${candidateId(c)}">${escapeHtml(cell.text)}</a></td>`;
        }
        return `<td${cls}>${escapeHtml(cell.text)}</td>`;
      });
      return `<tr>${cells.join('')}</tr>`;
    })
    .join('\n');
  const more = model.candidates.length > limit ? `<p>The best ${limit} of ${model.candidates.length} candidates are listed; ranking.csv beside this report lists all.</p>` : '';
  return `<table id="ranking"><caption>${escapeHtml(table.caption ?? '')}</caption><thead><tr>${head}</tr></thead><tbody>\n${body}\n</tbody></table>${more}`;
}

/** Anchor id of a candidate's section (rank-based, so user text never enters an id). */
export function candidateId(c: CandidateView): string {
  return `candidate-${Math.round(c.rank)}`;
}

/**
 * Inline SVG: drop the namespace declarations (not needed in HTML) and the fixed size, keep the
 * viewBox, and prefix every id (and its url(#id) / href="#id" uses) with `prefix`, since ids of
 * several inline SVGs share one document (Vega numbers its clip paths from 1 in every SVG).
 */
export function inlineSvg(svg: string, prefix = ''): string {
  const ids = prefix === '' ? svg : svg
    .replace(/\sid="([^"]+)"/g, (_m, id: string) => ` id="${prefix}${id}"`)
    .replace(/url\(#([^)]+)\)/g, (_m, id: string) => `url(#${prefix}${id})`)
    .replace(/href="#([^"]+)"/g, (_m, id: string) => `href="#${prefix}${id}"`);
  return ids
    .replace(/^<\?xml[^>]*>\s*/, '')
    .replace(/<svg\b[^>]*>/, (root) =>
      root
        .replace(/\s+xmlns(:xlink)?="[^"]*"/g, '')
        .replace(/\s+width="[^"]*"/, '')
        .replace(/\s+height="[^"]*"/, '')
        .replace('<svg', '<svg role="img"'),
    );
}

function plotHtml(plot: HtmlPlot): string {
  const id = plot.id.replace(/[^A-Za-z0-9-]/g, '-');
  const notes = (plot.notes ?? []).map((n) => ` ${escapeHtml(n)}.`).join('');
  const files = plot.files && plot.files.length > 0
    ? ` Files: ${plot.files.map((f) => `<a href="${escapeHtml(encodeURI(f))}">${escapeHtml(f)}</a>`).join(', ')}.`
    : '';
  return `<figure id="plot-${id}" class="plot">\n${inlineSvg(plot.svg, `${id}-`)}\n<figcaption><strong>${escapeHtml(plot.title)}.</strong> ${escapeHtml(plot.caption)}${notes}${files}</figcaption>\n</figure>`;
}

function summaryHtml(model: ReportModel): string {
  const best = model.candidates[0];
  if (!best) return '<p>The result holds no candidates.</p>';
  if (model.kind === 'fit') {
    const s = best.stats;
    return `<p>One fit of <strong>${escapeHtml(best.name)}</strong>: R-factor ${escapeHtml(formatNumber(s.rFactor, 3))}, reduced χ² ${escapeHtml(formatNumber(s.reducedChiSquare, 3))}, ${escapeHtml(formatNumber(s.nVaried, 3))} varied parameters for ${escapeHtml(formatNumber(s.nIndependent, 3))} independent points.</p>`;
  }
  const alike = model.candidates.filter((c) => c.verdictClass === 'indistinguishable');
  const parts = [
    `<p>${model.candidates.length} candidate${model.candidates.length === 1 ? '' : 's'} ranked. Best: <strong>${escapeHtml(best.name)}</strong> (R-factor ${escapeHtml(formatNumber(best.stats.rFactor, 3))}, reduced χ² ${escapeHtml(formatNumber(best.stats.reducedChiSquare, 3))}).`,
  ];
  if (alike.length > 0) {
    const names = alike.slice(0, 8).map((c) => `<strong>${escapeHtml(c.name)}</strong>`).join(', ');
    parts.push(` Not distinguishable from the best with these data: ${names}${alike.length > 8 ? ` and ${alike.length - 8} more` : ''}; the data do not decide between them.`);
  } else if (model.candidates.length > 1) {
    parts.push(' Every other candidate is worse than the best by the significance test.');
  }
  parts.push('</p>');
  return parts.join('');
}

function statusText(status: Record<string, unknown> | undefined): string {
  if (!status) return 'not reported';
  const bits: string[] = [];
  if (typeof status.converged === 'boolean') bits.push(status.converged ? 'converged' : 'did not converge');
  if (typeof status.code === 'string') bits.push(status.code);
  if (typeof status.iterations === 'number') bits.push(`${status.iterations} iterations`);
  if (typeof status.reason === 'string') bits.push(status.reason);
  if (typeof status.message === 'string') bits.push(status.message);
  return bits.length > 0 ? bits.join('; ') : JSON.stringify(status);
}

function correlationsHtml(c: CandidateView): string {
  if (c.correlations.length === 0) return '<p>Correlations: not reported.</p>';
  const sorted = [...c.correlations].sort((a, b) => Math.abs(b.value) - Math.abs(a.value));
  const shown = sorted.filter((x) => Math.abs(x.value) >= 0.5).slice(0, 12);
  if (shown.length === 0) return `<p>Correlations: none above 0.5 in magnitude (largest ${escapeHtml(formatNumber(sorted[0].value, 2))}).</p>`;
  const items = shown.map((x) => `<li>${escapeHtml(x.a)} – ${escapeHtml(x.b)}: ${escapeHtml(formatNumber(x.value, 2))}${Math.abs(x.value) > 0.9 ? ' <strong>(above 0.9)</strong>' : ''}</li>`).join('');
  return `<p>Correlations of magnitude 0.5 or more:</p><ul>${items}</ul>`;
}

function jsonBlock(value: unknown): string {
  return `<pre>${escapeHtml(JSON.stringify(value ?? null, null, 2))}</pre>`;
}

function candidateHtml(model: ReportModel, c: CandidateView, plots: HtmlPlot[]): string {
  const parts = [`<section class="candidate" id="${candidateId(c)}">`];
  parts.push(`<h3>${model.kind === 'rank' ? `${Math.round(c.rank)}. ` : ''}${escapeHtml(c.name)}</h3>`);
  const meta: string[] = [];
  if (model.kind === 'rank') meta.push(`${verdictDot(c.verdictClass)}${escapeHtml(c.verdict)}`);
  if (c.pValue !== null) meta.push(`p = ${escapeHtml(formatPValue(c.pValue))}${c.significanceTest ? ` (${escapeHtml(c.significanceTest)})` : ''} against the best`);
  if (c.files.length > 0) meta.push(`structure${c.files.length > 1 ? 's' : ''} ${c.files.map((f) => `<code>${escapeHtml(f)}</code>`).join(' + ')}`);
  else if (c.file) meta.push(`structure <code>${escapeHtml(c.file)}</code>`);
  if (c.components.length > 1) meta.push(`mixture of ${c.components.map(escapeHtml).join(' and ')}`);
  meta.push(`fit status: ${escapeHtml(statusText(c.status))}`);
  parts.push(`<p>${meta.join(' · ')}</p>`);
  if (c.warnings.length > 0) parts.push(`<ul class="warnings">${c.warnings.map((w) => `<li>${escapeHtml(w)}</li>`).join('')}</ul>`);
  if (Object.keys(c.params).length > 0 || c.shells.length > 0) parts.push(tableToHtml(fitParameterTable(c)));
  else parts.push('<p>No parameters in the result (a pre-screened candidate without a refined fit).</p>');
  parts.push(tableToHtml(fitStatisticsTable(c)));
  parts.push(correlationsHtml(c));
  for (const p of plots.filter((x) => x.candidate === c.name)) parts.push(plotHtml(p));
  parts.push('</section>');
  return parts.join('\n');
}

function provenanceHtml(model: ReportModel, options: HtmlOptions, detailed: CandidateView[]): string {
  const parts = ['<details id="provenance"><summary>Provenance of every number (settings, input hashes, code version)</summary>'];
  const lines: string[] = [];
  if (options.input) lines.push(`<li>Report made from <code>${escapeHtml(options.input.file)}</code>, SHA-256 <code>${escapeHtml(options.input.sha256)}</code>.</li>`);
  if (options.version) lines.push(`<li>Report written by shellrank ${escapeHtml(options.version)}.</li>`);
  const version = model.provenance?.version;
  if (typeof version === 'string') lines.push(`<li>The ${model.kind} result was computed by ${escapeHtml(String(model.provenance?.tool ?? 'shellrank'))} ${escapeHtml(version)}.</li>`);
  lines.push('<li>Every number in the tables is the value stored in that result, rounded for display only (error to one or two significant digits by the Particle Data Group rule); the CSV files beside this report hold them at full precision.</li>');
  parts.push(`<ul>${lines.join('')}</ul>`);
  if (model.settings) parts.push('<h3>Settings</h3>', jsonBlock(model.settings));
  if (model.provenance) parts.push(`<h3>Provenance of the ${model.kind} result</h3>`, jsonBlock(model.provenance));
  for (const c of detailed) {
    if (!c.provenance && !c.settings) continue;
    parts.push(`<details><summary>Fit of ${escapeHtml(c.name)}</summary>`);
    if (c.settings) parts.push(jsonBlock(c.settings));
    if (c.provenance) parts.push(jsonBlock(c.provenance));
    parts.push('</details>');
  }
  parts.push('</details>');
  return parts.join('\n');
}

/**
 * The report page.
 * @param model the validated result (see {@link ReportModel})
 * @param options plots (rendered SVG), input file hash, version, side files
 * @returns one HTML document as a string (UTF-8)
 */
export function renderHtml(model: ReportModel, options: HtmlOptions = {}): string {
  const title = options.title ?? (model.kind === 'rank' ? 'shellrank: ranking of candidate structures' : 'shellrank: structural fit');
  const plots = options.plots ?? [];
  const detailLimit = options.detailLimit ?? 20;
  const detailed = model.candidates.slice(0, detailLimit);
  const font = (options.embedFont ?? true) ? fontFace(options.fontFolder ?? DEJAVU_FOLDER) : null;
  const warnings = [
    ...model.warnings,
    ...model.candidates.slice(0, detailLimit).flatMap((c) => c.warnings.map((w) => (model.kind === 'rank' ? `${c.name}: ${w}` : w))),
    ...(options.notes ?? []),
  ];
  const body: string[] = [];
  body.push(`<header><h1>${escapeHtml(title)}</h1>`);
  if (options.input) body.push(`<p class="sub">From <code>${escapeHtml(options.input.file)}</code></p>`);
  body.push('</header>');
  body.push(`<aside class="caution" role="note"><strong>Caution.</strong> ${escapeHtml(CAUTION_TEXT)}</aside>`);
  body.push('<h2 id="summary">Summary</h2>', summaryHtml(model));
  body.push('<h2 id="warnings">Warnings</h2>');
  body.push(warnings.length > 0 ? `<ul class="warnings">${warnings.map((w) => `<li>${escapeHtml(w)}</li>`).join('')}</ul>` : '<p>None.</p>');
  if (model.kind === 'rank') {
    body.push('<h2 id="ranking-section">Ranking</h2>', rankingHtml(model, options.rankingLimit ?? 500));
    body.push('<p class="sub">Verdicts come from the significance test of each candidate against the best; "not distinguishable" means these data cannot tell the two apart, not that they are the same.</p>');
  }
  const overview = plots.filter((p) => p.candidate === undefined);
  if (overview.length > 0) {
    body.push('<h2 id="plots">Plots</h2>');
    for (const p of overview) body.push(plotHtml(p));
  }
  body.push(`<h2 id="fits">${model.kind === 'rank' ? 'Fits of the candidates' : 'Fit'}</h2>`);
  if (detailed.length < model.candidates.length) body.push(`<p>Details of the best ${detailed.length} of ${model.candidates.length} candidates; the others are in the ranking table and the JSON.</p>`);
  for (const c of detailed) body.push(candidateHtml(model, c, plots));
  if (options.files && options.files.length > 0) {
    body.push('<h2 id="files">Files beside this report</h2>');
    body.push(`<ul class="files">${options.files.map((f) => `<li><a href="${escapeHtml(encodeURI(f.path))}">${escapeHtml(f.path)}</a>: ${escapeHtml(f.description)}</li>`).join('')}</ul>`);
  }
  body.push('<h2 id="provenance-section">Provenance</h2>', provenanceHtml(model, options, detailed));
  return [
    '<!DOCTYPE html>',
    '<html lang="en">',
    '<head>',
    '<meta charset="utf-8">',
    '<meta name="viewport" content="width=device-width, initial-scale=1">',
    `<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; font-src data:; img-src data:">`,
    `<title>${escapeHtml(title)}</title>`,
    `<style>${font ?? ''}${CSS}</style>`,
    '</head>',
    '<body>',
    ...body,
    '</body>',
    '</html>',
    '',
  ].join('\n');
}
