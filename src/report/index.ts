/**
 * Writing a report: from one fit or rank result (parsed JSON), the self-contained report.html and,
 * beside it, the result JSON, the tables (CSV, Markdown, LaTeX) and the plots (SVG, PNG), every
 * file written atomically (src/core/files.ts) so a failed run leaves no half-written report.
 *
 *     outDir/report.html
 *     outDir/rank.json | fit.json            the result as read
 *     outDir/ranking.{csv,md,tex}            rank results only
 *     outDir/fits/NN-name.{csv,md,tex}       parameters (+ statistics in .md/.tex) per detailed fit
 *     outDir/plots/{fit-k,fit-r,scores,shells-NN-name}.{svg,png}
 */
import { join } from 'node:path';
import { writeFileAtomic } from '../core/files';
import { sha256 } from '../core/hash';
import { SHELLRANK_VERSION } from '../core/provenance';
import { renderHtml, type HtmlPlot } from './html';
import {
  fitsWithCurves,
  kOverlayPlot,
  renderPlot,
  rOverlayPlot,
  scoreChart,
  shellContributionsPlot,
  type ColumnWidth,
  type Plot,
  type RenderedPlot,
} from './plots';
import { fitParameterCsv, fitParameterTable, fitStatisticsTable, rankingTable, tableToCsv, tableToLatex, tableToMarkdown } from './tables';
import { reportModelFrom, type CandidateView, type ReportModel } from './types';

export { reportModelFrom, detectResultKind } from './types';
export type { ReportModel, CandidateView } from './types';

export interface ReportOptions {
  /** Candidates drawn in the overlays; default 3. */
  top?: number;
  /** Candidates with a detailed section, a parameter table file and (the first `top`) a shell plot; default 20. */
  detailLimit?: number;
  /** Also write PNGs; default true. */
  png?: boolean;
  /** PNG density; default 300 dpi. */
  dpi?: number;
  /** Plot width: a journal column or inches; default 'single'. */
  width?: ColumnWidth | number;
  /** Embed DejaVu Sans in report.html; default true. */
  embedFont?: boolean;
  /** The result file the report is made from (named, with its hash, in the provenance). */
  inputFile?: { path: string; text: string };
  /** Paths never overwritten (the run's inputs). */
  protectedInputs?: readonly string[];
  title?: string;
}

/** What was written. */
export interface WrittenReport {
  outDir: string;
  /** Path of report.html. */
  html: string;
  /** Every file written, relative to outDir. */
  files: string[];
  /** Notes about the report (plots left out, font fallbacks). */
  warnings: string[];
  kind: 'fit' | 'rank';
}

/** A file-name-safe form of a candidate's name: lower-case letters, digits and dashes, at most 40. */
export function fileSlug(name: string): string {
  const slug = name.toLowerCase().normalize('NFKD').replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 40).replace(/-+$/, '');
  return slug === '' ? 'candidate' : slug;
}

function candidateStem(c: CandidateView): string {
  return `${String(Math.round(c.rank)).padStart(2, '0')}-${fileSlug(c.name)}`;
}

const K_CAPTION = 'Measured k-weighted χ(k) (black) and the models of the top candidates; below, the residual data − model, k-weighted. Grey: the k range of the Fourier window.';
const R_CAPTION = 'Magnitude and real part of the Fourier transform of k-weighted χ(k), data (black) and models, all with the same window; below, the magnitude of the complex difference data − model. Grey: the R range of the fit.';
const SCORE_CAPTION = 'Scores of the candidates, best at the top, coloured by verdict. Grey band: scores the significance test cannot tell apart from the best.';
const SHELL_CAPTION = 'Magnitude of the transform of each shell\'s contribution and of the whole model (black), same window as the fit. Grey: the R range of the fit.';

/**
 * Write the report of a fit or rank result to `outDir`.
 * @param result the parsed result JSON (a fit or a rank document)
 * @param outDir folder to write into (created when missing)
 * @throws InputError when the document is neither a fit nor a rank result, or a file cannot be written
 */
export async function writeReport(result: unknown, outDir: string, options: ReportOptions = {}): Promise<WrittenReport> {
  const model: ReportModel = reportModelFrom(result, options.inputFile?.path);
  const top = options.top ?? 3;
  const detailLimit = options.detailLimit ?? 20;
  const protectedInputs = [...(options.protectedInputs ?? [])];
  const written: string[] = [];
  const warnings: string[] = [];
  const write = (relative: string, content: string | Uint8Array) => {
    writeFileAtomic(join(outDir, relative), content, protectedInputs);
    written.push(relative);
  };

  // plots
  const htmlPlots: HtmlPlot[] = [];
  const renderOptions = { png: options.png ?? true, dpi: options.dpi ?? 300 };
  const emit = async (plot: Plot, caption: string, candidate?: string) => {
    const rendered: RenderedPlot = await renderPlot({ ...plot, widthInches: plot.widthInches }, renderOptions);
    const files = [`plots/${plot.name}.svg`];
    write(files[0], rendered.svg);
    if (rendered.png) {
      files.push(`plots/${plot.name}.png`);
      write(files[1], rendered.png);
    }
    if (rendered.fontWarning && !warnings.includes(rendered.fontWarning)) warnings.push(rendered.fontWarning);
    htmlPlots.push({ id: plot.name, title: plot.title, svg: rendered.svg, caption, notes: plot.notes, files, candidate });
  };
  const fits = fitsWithCurves(model, top);
  if (fits.length > 0) {
    await emit(kOverlayPlot(fits, { width: options.width }), K_CAPTION);
    await emit(rOverlayPlot(fits, { width: options.width }), R_CAPTION);
  } else {
    warnings.push('no fit in the result carries curves (data and model), so the overlay plots are left out');
  }
  if (model.kind === 'rank') await emit(scoreChart(model, { width: options.width }), SCORE_CAPTION);
  for (const c of model.candidates.slice(0, top)) {
    if (!c.curves || c.curves.shells.length === 0) continue;
    await emit(shellContributionsPlot(`shells-${candidateStem(c)}`, { label: c.name, curves: c.curves }, { width: options.width }), SHELL_CAPTION, c.name);
  }

  // tables
  const files: { path: string; description: string }[] = [];
  const jsonName = model.kind === 'rank' ? 'rank.json' : 'fit.json';
  write(jsonName, `${JSON.stringify(result, null, 2)}\n`);
  files.push({ path: jsonName, description: `the ${model.kind} result as read` });
  if (model.kind === 'rank') {
    const table = rankingTable(model.candidates);
    write('ranking.csv', tableToCsv(table));
    write('ranking.md', tableToMarkdown(table));
    write('ranking.tex', tableToLatex(table, { label: 'tab:ranking' }));
    files.push({ path: 'ranking.csv', description: 'ranking, full-precision numbers' }, { path: 'ranking.md', description: 'ranking, Markdown' }, { path: 'ranking.tex', description: 'ranking, LaTeX (booktabs)' });
  }
  for (const c of model.candidates.slice(0, detailLimit)) {
    const stem = model.kind === 'rank' ? `fits/${candidateStem(c)}` : 'parameters';
    const parameters = fitParameterTable(c);
    const statistics = fitStatisticsTable(c);
    write(`${stem}.csv`, fitParameterCsv(c));
    write(`${stem}.md`, `${tableToMarkdown(parameters)}\n${tableToMarkdown(statistics)}`);
    write(`${stem}.tex`, `${tableToLatex(parameters, { label: `tab:${stem.replace('/', '-')}` })}\n${tableToLatex(statistics, { label: `tab:${stem.replace('/', '-')}-stats` })}`);
    files.push({ path: `${stem}.csv`, description: `parameters of ${c.name}, full precision` }, { path: `${stem}.md`, description: 'the same with statistics, Markdown' }, { path: `${stem}.tex`, description: 'the same, LaTeX (booktabs)' });
  }
  for (const p of htmlPlots) for (const f of p.files ?? []) files.push({ path: f, description: p.title });

  const html = renderHtml(model, {
    title: options.title,
    plots: htmlPlots,
    embedFont: options.embedFont,
    input: options.inputFile ? { file: options.inputFile.path, sha256: sha256(options.inputFile.text) } : undefined,
    version: SHELLRANK_VERSION,
    files,
    detailLimit,
    notes: warnings,
  });
  write('report.html', html);
  return { outDir, html: join(outDir, 'report.html'), files: written, warnings, kind: model.kind };
}
