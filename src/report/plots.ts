/**
 * Journal-ready plots of fits, rankings and reductions: Vega-Lite specifications, rendered to SVG
 * in Node by Vega (renderer 'none', `view.toSVG()`), and to PNG from that SVG by resvg.
 *
 * - Colours: the Okabe-Ito colour-blind-safe palette (M. Okabe and K. Ito, "Color Universal
 *   Design (CUD): how to make figures and presentations that are friendly to colorblind people"
 *   (2002, revised 2008); B. Wong, "Points of view: Color blindness", Nature Methods 8, 441 (2011)),
 *   with a dash pattern per series as well, so lines stay apart in greyscale print.
 * - Sizes: the width of a journal column at 96 SVG user units per inch (CSS): single column
 *   3.35 in (85 mm), one and a half 5.51 in (140 mm), double 7.0 in (178 mm) (common practice of
 *   journals' author guidelines, no single source); PNG at 300 dpi by default, with the density
 *   written into the PNG's pHYs chunk (W3C PNG specification, 2nd ed., section 11.3.5.3).
 * - Fonts: DejaVu Sans, given to resvg as font files from /usr/share/fonts/truetype/dejavu so the
 *   PNG is the same on every machine that has them; when they are missing resvg falls back to the
 *   system's fonts and the rendered plot says so in `fontWarning`.
 * - Axis titles carry symbols and units: k (Å⁻¹), R (Å), E (eV), k^w χ(k) (Å⁻ʷ),
 *   |χ(R)| (Å⁻⁽ʷ⁺¹⁾) with the transform convention of src/numeric/fourier.ts.
 *
 * The general {@link stackedLinePlot} serves every line plot (the fit overlays and the reduction
 * plots); the specific builders only arrange series and titles.
 */
import { existsSync } from 'node:fs';
import * as vega from 'vega';
import * as vl from 'vega-lite';
import type { TopLevelSpec } from 'vega-lite';
import { Resvg } from '@resvg/resvg-js';
import { forwardTransform, magnitude, type ComplexSpectrum } from '../numeric/fourier';
import type { WindowShape, WindowSpec } from '../numeric/window';
import type { CandidateView, CurvesView, ReportModel, VerdictClass } from './types';

// ---------------------------------------------------------------------------------------------
// Palette, sizes, fonts

/** The Okabe-Ito palette (Wong 2011, Fig. 2: RGB 0-255 given beside each). */
export const OKABE_ITO = {
  black: '#000000', // 0, 0, 0
  orange: '#E69F00', // 230, 159, 0
  skyBlue: '#56B4E9', // 86, 180, 233
  bluishGreen: '#009E73', // 0, 158, 115
  yellow: '#F0E442', // 240, 228, 66
  blue: '#0072B2', // 0, 114, 178
  vermillion: '#D55E00', // 213, 94, 0
  reddishPurple: '#CC79A7', // 204, 121, 167
} as const;

/** Colour of measured data. */
export const DATA_COLOUR = OKABE_ITO.black;
/** Colours of models/series in order; yellow last (weak on white paper). */
export const SERIES_COLOURS: readonly string[] = [
  OKABE_ITO.blue,
  OKABE_ITO.vermillion,
  OKABE_ITO.bluishGreen,
  OKABE_ITO.reddishPurple,
  OKABE_ITO.orange,
  OKABE_ITO.skyBlue,
  OKABE_ITO.yellow,
];
/** Dash patterns (SVG stroke-dasharray, px) paired with the series colours; data is solid. */
export const SERIES_DASHES: readonly number[][] = [[6, 3], [2, 2], [8, 3, 2, 3], [1, 3], [10, 4], [4, 2, 1, 2], [3, 3]];

/** Journal column widths in inches (common practice, no single source). */
export const COLUMN_WIDTH_INCHES = { single: 3.35, onehalf: 5.51, double: 7.0 } as const;
export type ColumnWidth = keyof typeof COLUMN_WIDTH_INCHES;

/** SVG user units (CSS px) per inch. */
const PX_PER_INCH = 96;

/** The font every plot asks for, then fallbacks for viewers without it. */
export const PLOT_FONT_FAMILY = 'DejaVu Sans, Verdana, sans-serif';
/** Folder of the DejaVu fonts on Debian. */
export const DEJAVU_FOLDER = '/usr/share/fonts/truetype/dejavu';
const DEJAVU_FILES = ['DejaVuSans.ttf', 'DejaVuSans-Bold.ttf', 'DejaVuSans-Oblique.ttf', 'DejaVuSans-BoldOblique.ttf'];

/** The DejaVu Sans files found on this machine (empty when none). */
export function plotFontFiles(folder = DEJAVU_FOLDER): string[] {
  return DEJAVU_FILES.map((f) => `${folder}/${f}`).filter((f) => existsSync(f));
}

// ---------------------------------------------------------------------------------------------
// Units and symbols

const SUPERSCRIPT: Record<string, string> = { '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻', '.': '·' };

/** An integer as Unicode superscript digits ("-3" -> "⁻³"). */
export function superscript(n: number): string {
  return String(n).split('').map((c) => SUPERSCRIPT[c] ?? c).join('');
}

/** "Å⁻ⁿ" (empty for n = 0, "Å⁻¹" for 1). */
export function inverseAngstrom(power: number): string {
  return power === 0 ? '' : `Å${superscript(-power)}`;
}

/** Axis title of k^w chi(k): "χ(k)", "kχ(k) (Å⁻¹)", "k²χ(k) (Å⁻²)". */
export function kWeightedTitle(kWeighting: number): string {
  const prefix = kWeighting === 0 ? '' : kWeighting === 1 ? 'k' : `k${superscript(kWeighting)}`;
  return kWeighting === 0 ? 'χ(k)' : `${prefix}χ(k) (${inverseAngstrom(kWeighting)})`;
}

/** Axis title of the transform of k^w chi(k): "|χ(R)| (Å⁻³)" for w = 2 (unit Å^-(w+1)). */
export function chiRTitle(kWeighting: number, part: 'magnitude' | 'real' | 'imaginary' = 'magnitude'): string {
  const symbol = part === 'magnitude' ? '|χ(R)|' : part === 'real' ? 'Re χ(R)' : 'Im χ(R)';
  return `${symbol} (${inverseAngstrom(kWeighting + 1)})`;
}

export const K_TITLE = 'k (Å⁻¹)';
export const R_TITLE = 'R (Å)';
export const E_TITLE = 'E (eV)';

// ---------------------------------------------------------------------------------------------
// The general line plot

/** One line. */
export interface LineSeries {
  /** Legend label (user text: escaped by the renderer). */
  label: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** Default: the next palette colour. */
  colour?: string;
  /** Dash pattern; [] for solid. Default: the colour's pattern. */
  dash?: number[];
  /** Stroke width in px; default 1.3. */
  strokeWidth?: number;
}

/** One panel of a stacked plot, sharing the x axis with the others. */
export interface LinePanel {
  series: LineSeries[];
  yTitle: AxisTitle;
  /** Height of the plotting area, px (1/96 in). */
  height: number;
  /** Shaded x ranges (e.g. the fit range); drawn light grey under the lines. */
  shade?: { from: number; to: number }[];
  /** Vertical rules (e.g. E0). */
  rules?: number[];
  /** Draw y = 0 as a thin line. */
  zeroLine?: boolean;
}

/** An axis title: one line, or several (e.g. a name and its unit). */
export type AxisTitle = string | string[];

export interface PlotSize {
  /** Column name or width in inches; default 'single'. */
  width?: ColumnWidth | number;
}

export interface StackedPlotInput extends PlotSize {
  panels: LinePanel[];
  xTitle: string;
  xDomain?: [number, number];
  /** d3-format string of the x tick labels (e.g. 'd' for energies without thousands commas). */
  xFormat?: string;
  title?: string;
  /** A second, plain line under the title (e.g. the candidate's name). */
  subtitle?: string;
  /** Legend title; default none. */
  legendTitle?: string;
}

/** A plot: its file stem, title and Vega-Lite specification. */
export interface Plot {
  name: string;
  title: string;
  spec: TopLevelSpec;
  /** Width the plot is meant to print at, inches. */
  widthInches: number;
  /** Notes from building it (e.g. a transform that could not be done). */
  notes: string[];
  /** Width of the plotting area, px; with `rebuild`, lets the renderer fit the whole to the column. */
  innerWidth?: number;
  /** The same plot with another plotting-area width. */
  rebuild?: (innerWidth: number) => TopLevelSpec;
}

type Json = Record<string, unknown>;

/** Labels made unique ("a", "a (2)"), since the legend keys series by label. */
function uniqueLabels(labels: string[]): string[] {
  const seen = new Map<string, number>();
  return labels.map((l) => {
    const count = (seen.get(l) ?? 0) + 1;
    seen.set(l, count);
    return count === 1 ? l : `${l} (${count})`;
  });
}

function widthInches(width: ColumnWidth | number | undefined): number {
  if (width === undefined) return COLUMN_WIDTH_INCHES.single;
  return typeof width === 'number' ? width : COLUMN_WIDTH_INCHES[width];
}

/** Shared look: fonts in px at 96/in (10 px = 7.5 pt, 11 px = 8.25 pt at print size). */
function baseConfig(): Json {
  return {
    font: PLOT_FONT_FAMILY,
    background: 'white',
    padding: 4,
    view: { stroke: '#000000', strokeWidth: 0.8 },
    axis: {
      labelFontSize: 10,
      titleFontSize: 11,
      titleFontWeight: 'normal',
      grid: false,
      domain: false,
      tickColor: '#000000',
      labelColor: '#000000',
      titleColor: '#000000',
      tickSize: 4,
      labelFlush: true,
    },
    legend: {
      labelFontSize: 10,
      titleFontSize: 10,
      titleFontWeight: 'normal',
      orient: 'top',
      direction: 'horizontal',
      symbolType: 'stroke',
      symbolSize: 260,
      symbolStrokeWidth: 2,
      labelLimit: 150,
      columnPadding: 8,
      rowPadding: 2,
    },
    title: { fontSize: 11, fontWeight: 'bold', anchor: 'start', offset: 4 },
    line: { strokeWidth: 1.3 },
  };
}

/** Assign colours and dashes, unique labels; data-like series keep what they were given. */
function styleSeries(panels: LinePanel[]): { domain: string[]; colours: string[]; dashes: number[][]; widths: Map<string, number>; perPanel: { label: string; s: LineSeries }[][] } {
  const order: string[] = [];
  const style = new Map<string, { colour: string; dash: number[]; width: number }>();
  let next = 0;
  const perPanel = panels.map((p) => {
    const labels = uniqueLabels(p.series.map((s) => s.label));
    return p.series.map((s, i) => {
      const label = labels[i];
      if (!style.has(label)) {
        const colour = s.colour ?? SERIES_COLOURS[next % SERIES_COLOURS.length];
        const dash = s.dash ?? (s.colour === undefined ? SERIES_DASHES[next % SERIES_DASHES.length] : []);
        if (s.colour === undefined) next++;
        style.set(label, { colour, dash, width: s.strokeWidth ?? 1.3 });
        order.push(label);
      }
      return { label, s };
    });
  });
  return {
    domain: order,
    colours: order.map((l) => style.get(l)!.colour),
    dashes: order.map((l) => style.get(l)!.dash),
    widths: new Map(order.map((l) => [l, style.get(l)!.width])),
    perPanel,
  };
}

function finiteRows(label: string, x: ArrayLike<number>, y: ArrayLike<number>, domain?: [number, number]): Json[] {
  const rows: Json[] = [];
  const n = Math.min(x.length, y.length);
  for (let i = 0; i < n; i++) {
    const xi = x[i];
    const yi = y[i];
    if (!Number.isFinite(xi) || !Number.isFinite(yi)) continue;
    if (domain && (xi < domain[0] || xi > domain[1])) continue;
    rows.push({ x: xi, y: yi, series: label });
  }
  return rows;
}

/** A layer that draws one mark without data rows of its own (rules, shaded ranges). */
function annotation(mark: Json, encoding: Json): Json {
  return { data: { values: [{}] }, mark, encoding };
}

/**
 * A stack of line panels sharing the x axis (e.g. data and models above, residuals below), one
 * legend for all series, sized for a journal column.
 */
export function stackedLinePlot(name: string, input: StackedPlotInput): Plot {
  const inches = widthInches(input.width);
  const { domain, colours, dashes, widths, perPanel } = styleSeries(input.panels);
  const xScale: Json = { zero: false, nice: false };
  if (input.xDomain) xScale.domain = input.xDomain;
  // keep the legend inside the column (Vega-Lite widens the figure to fit a wider legend), in two
  // columns only when every label fits whole in half the width. Vega lays text out (without a
  // canvas) at an estimated 0.8 em per character, so that is what is counted here.
  const halfLimit = Math.floor((inches * PX_PER_INCH - 40) / 2 - 40);
  const longest = Math.max(0, ...domain.map((l) => l.length * 8));
  const columns = domain.length >= 2 && longest <= halfLimit ? 2 : 1;
  const labelLimit = columns === 2 ? halfLimit : Math.max(60, Math.floor(inches * PX_PER_INCH - 70));
  const legend: Json = { title: input.legendTitle ?? null, columns, labelLimit };
  const build = (innerWidth: number): TopLevelSpec => {
    const panels = input.panels.map((panel, index) => {
      const last = index === input.panels.length - 1;
      const layers: Json[] = [];
      for (const shade of panel.shade ?? []) {
        layers.push(annotation({ type: 'rect', color: '#000000', opacity: 0.07 }, { x: { datum: shade.from, type: 'quantitative' }, x2: { datum: shade.to } }));
      }
      if (panel.zeroLine) layers.push(annotation({ type: 'rule', color: '#777777', strokeWidth: 0.6 }, { y: { datum: 0, type: 'quantitative' } }));
      for (const rule of panel.rules ?? []) {
        layers.push(annotation({ type: 'rule', color: '#555555', strokeWidth: 0.8, strokeDash: [3, 2] }, { x: { datum: rule, type: 'quantitative' } }));
      }
      // one layer per stroke width (the data drawn heavier), all on the shared colour/dash scales
      const byWidth = new Map<number, Json[]>();
      for (const { label, s } of perPanel[index]) {
        const w = widths.get(label) ?? 1.3;
        const rows = byWidth.get(w) ?? [];
        rows.push(...finiteRows(label, s.x, s.y, input.xDomain));
        byWidth.set(w, rows);
      }
      for (const [strokeWidth, rows] of byWidth) {
        layers.push({
          data: { values: rows },
          mark: { type: 'line', clip: true, strokeJoin: 'round', strokeWidth },
          encoding: {
            x: {
              field: 'x',
              type: 'quantitative',
              scale: xScale,
              axis: last ? { title: input.xTitle, ...(input.xFormat ? { format: input.xFormat } : {}) } : { title: null, labels: false },
            },
            y: { field: 'y', type: 'quantitative', scale: { zero: false }, axis: { title: panel.yTitle, tickCount: Math.max(3, Math.round(panel.height / 35)) } },
            color: { field: 'series', type: 'nominal', scale: { domain, range: colours }, legend },
            strokeDash: { field: 'series', type: 'nominal', scale: { domain, range: dashes }, legend },
          },
        });
      }
      return { width: innerWidth, height: panel.height, layer: layers };
    });
    const spec: Json = {
      $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
      config: baseConfig(),
      spacing: 6,
      vconcat: panels,
      resolve: { scale: { x: 'shared', color: 'shared', strokeDash: 'shared' }, legend: { color: 'shared', strokeDash: 'shared' } },
    };
    if (input.title) spec.title = { text: input.title, limit: Math.round(inches * PX_PER_INCH - 12), ...(input.subtitle ? { subtitle: input.subtitle, subtitleFontSize: 10, subtitleColor: '#000000' } : {}) };
    return spec as unknown as TopLevelSpec;
  };
  const innerWidth = Math.max(120, Math.round(inches * PX_PER_INCH - 100));
  return { name, title: input.title ?? name, spec: build(innerWidth), widthInches: inches, notes: [], innerWidth, rebuild: build };
}

// ---------------------------------------------------------------------------------------------
// Fit overlays

/** Options shared by the fit plots. */
export interface FitPlotOptions extends PlotSize {
  /** k-weight of the plots; default the fit's own. */
  kWeighting?: number;
  /** Upper end of the R axis, Å; default 6. */
  rMax?: number;
  /** Label of the measured data in legends; default 'data'. */
  dataLabel?: string;
  /** Plot title; default a descriptive one. */
  title?: string;
}

/** k^w times each value (new array). */
function weighted(k: Float64Array, chi: Float64Array, w: number): Float64Array {
  const out = new Float64Array(k.length);
  for (let i = 0; i < k.length; i++) out[i] = chi[i] * Math.pow(k[i], w);
  return out;
}

function difference(a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(Math.min(a.length, b.length));
  for (let i = 0; i < out.length; i++) out[i] = a[i] - b[i];
  return out;
}

/** "residual" over its unit on a second line (short enough for a low residual panel). */
function residualTitle(unit: string): AxisTitle {
  return unit === '' ? 'residual' : ['residual', `(${unit})`];
}

/** A fit's label and curves, for the overlays. */
export interface LabelledCurves { label: string; curves: CurvesView }

function windowOf(c: CurvesView): WindowSpec {
  if (c.window) return { shape: (c.window.shape as WindowShape) ?? 'hann', min: c.window.min, max: c.window.max, taper: c.window.taper };
  return { shape: 'hann', min: c.k[0], max: c.k[c.k.length - 1], taper: 1 };
}

/**
 * Measured k^w chi(k) against the models of the top candidates, the residuals (data - model,
 * k-weighted) in a panel below, the fit window shaded.
 */
export function kOverlayPlot(fits: readonly LabelledCurves[], options: FitPlotOptions = {}): Plot {
  if (fits.length === 0) throw new RangeError('kOverlayPlot needs at least one fit with curves');
  const first = fits[0].curves;
  const w = options.kWeighting ?? first.kWeighting;
  const dataLabel = options.dataLabel ?? 'data';
  const window = first.window ? [{ from: first.window.min, to: first.window.max }] : [];
  const main: LineSeries[] = [{ label: dataLabel, x: first.k, y: weighted(first.k, first.data, w), colour: DATA_COLOUR, dash: [], strokeWidth: 1.6 }];
  const residuals: LineSeries[] = [];
  for (const fit of fits) {
    main.push({ label: fit.label, x: fit.curves.k, y: weighted(fit.curves.k, fit.curves.model, w) });
    residuals.push({ label: fit.label, x: fit.curves.k, y: weighted(fit.curves.k, difference(fit.curves.data, fit.curves.model), w) });
  }
  const plot = stackedLinePlot('fit-k', {
    width: options.width,
    title: options.title ?? `Data and the top ${fits.length === 1 ? 'model' : `${fits.length} models`} in k`,
    xTitle: K_TITLE,
    panels: [
      { series: main, yTitle: kWeightedTitle(w), height: 150, shade: window, zeroLine: true },
      { series: residuals, yTitle: residualTitle(inverseAngstrom(w)), height: 60, shade: window, zeroLine: true },
    ],
  });
  return plot;
}

/** The transform of k^w chi(k) with the fit's window, or null when the grid does not allow it. */
export function transformCurve(k: Float64Array, chi: Float64Array, kWeighting: number, window: WindowSpec): ComplexSpectrum | null {
  for (let i = 0; i < chi.length; i++) if (!Number.isFinite(chi[i])) return null;
  try {
    return forwardTransform(k, chi, { kWeighting, window });
  } catch (e) {
    if (e instanceof RangeError) return null;
    throw e;
  }
}

/** Cut a spectrum to x <= xMax. */
function upTo(s: ComplexSpectrum, xMax: number): ComplexSpectrum {
  let n = 0;
  while (n < s.x.length && s.x[n] <= xMax) n++;
  return { x: s.x.subarray(0, n), re: s.re.subarray(0, n), im: s.im.subarray(0, n) };
}

/**
 * |chi(R)| and Re chi(R) of data and models (the same window and k-weight for all, from the best
 * fit's curves) and the residual |chi_data(R) - chi_model(R)| below; the fit's R range shaded.
 * Fits whose k grid cannot be transformed are left out and named in `notes`.
 */
export function rOverlayPlot(fits: readonly LabelledCurves[], options: FitPlotOptions = {}): Plot {
  if (fits.length === 0) throw new RangeError('rOverlayPlot needs at least one fit with curves');
  const first = fits[0].curves;
  const w = options.kWeighting ?? first.kWeighting;
  const window = windowOf(first);
  const rMax = options.rMax ?? 6;
  const notes: string[] = [];
  const dataR = transformCurve(first.k, first.data, w, window);
  const magnitudeSeries: LineSeries[] = [];
  const realSeries: LineSeries[] = [];
  const residualSeries: LineSeries[] = [];
  const dataLabel = options.dataLabel ?? 'data';
  if (dataR) {
    const d = upTo(dataR, rMax);
    magnitudeSeries.push({ label: dataLabel, x: d.x, y: magnitude(d), colour: DATA_COLOUR, dash: [], strokeWidth: 1.6 });
    realSeries.push({ label: dataLabel, x: d.x, y: d.re, colour: DATA_COLOUR, dash: [], strokeWidth: 1.6 });
  } else {
    notes.push('the measured chi(k) could not be transformed (non-uniform grid or missing values)');
  }
  for (const fit of fits) {
    const modelR = transformCurve(fit.curves.k, fit.curves.model, w, window);
    const ownDataR = transformCurve(fit.curves.k, fit.curves.data, w, window);
    if (!modelR || !ownDataR) {
      notes.push(`${fit.label}: its curves could not be transformed and are left out of the R plot`);
      continue;
    }
    const m = upTo(modelR, rMax);
    const d = upTo(ownDataR, rMax);
    magnitudeSeries.push({ label: fit.label, x: m.x, y: magnitude(m) });
    realSeries.push({ label: fit.label, x: m.x, y: m.re });
    const residual = new Float64Array(m.x.length);
    for (let i = 0; i < residual.length; i++) residual[i] = Math.hypot(d.re[i] - m.re[i], d.im[i] - m.im[i]);
    residualSeries.push({ label: fit.label, x: m.x, y: residual });
  }
  const shade = first.rRange ? [{ from: first.rRange[0], to: first.rRange[1] }] : [];
  const plot = stackedLinePlot('fit-r', {
    width: options.width,
    title: options.title ?? `Data and the top ${fits.length === 1 ? 'model' : `${fits.length} models`} in R`,
    xTitle: R_TITLE,
    xDomain: [0, rMax],
    panels: [
      { series: magnitudeSeries, yTitle: chiRTitle(w, 'magnitude'), height: 110, shade },
      { series: realSeries, yTitle: chiRTitle(w, 'real'), height: 90, shade, zeroLine: true },
      { series: residualSeries, yTitle: residualTitle(inverseAngstrom(w + 1)), height: 60, shade },
    ],
  });
  plot.notes.push(...notes);
  return plot;
}

/**
 * The contribution of each shell of one fit: |chi_j(R)| of every shell and of the whole model
 * (when the curves can be transformed; otherwise k^w chi_j(k)).
 */
export function shellContributionsPlot(name: string, fit: LabelledCurves, options: FitPlotOptions = {}): Plot {
  const c = fit.curves;
  const w = options.kWeighting ?? c.kWeighting;
  const window = windowOf(c);
  const rMax = options.rMax ?? 6;
  const total = transformCurve(c.k, c.model, w, window);
  const title = options.title ?? 'Shell contributions';
  const subtitle = fit.label;
  if (total) {
    const t = upTo(total, rMax);
    const series: LineSeries[] = [{ label: 'whole model', x: t.x, y: magnitude(t), colour: DATA_COLOUR, dash: [], strokeWidth: 1.6 }];
    const notes: string[] = [];
    for (const shell of c.shells) {
      const s = transformCurve(c.k, shell.chi, w, window);
      if (!s) { notes.push(`shell ${shell.label} could not be transformed`); continue; }
      const u = upTo(s, rMax);
      series.push({ label: shell.label, x: u.x, y: magnitude(u) });
    }
    const plot = stackedLinePlot(name, {
      width: options.width, title, subtitle, xTitle: R_TITLE, xDomain: [0, rMax],
      panels: [{ series, yTitle: chiRTitle(w, 'magnitude'), height: 150, shade: c.rRange ? [{ from: c.rRange[0], to: c.rRange[1] }] : [] }],
    });
    plot.notes.push(...notes);
    return plot;
  }
  const series: LineSeries[] = [{ label: 'whole model', x: c.k, y: weighted(c.k, c.model, w), colour: DATA_COLOUR, dash: [], strokeWidth: 1.6 }];
  for (const shell of c.shells) series.push({ label: shell.label, x: c.k, y: weighted(c.k, shell.chi, w) });
  const plot = stackedLinePlot(name, { width: options.width, title, subtitle, xTitle: K_TITLE, panels: [{ series, yTitle: kWeightedTitle(w), height: 150, zeroLine: true }] });
  plot.notes.push('drawn in k: the curves could not be transformed to R');
  return plot;
}

// ---------------------------------------------------------------------------------------------
// Score chart

/** Colours of the verdict classes. */
export const VERDICT_COLOURS: Record<VerdictClass, string> = {
  best: OKABE_ITO.blue,
  indistinguishable: OKABE_ITO.skyBlue,
  worse: OKABE_ITO.orange,
  rejected: OKABE_ITO.vermillion,
  other: OKABE_ITO.reddishPurple,
};

const VERDICT_LEGEND: Record<VerdictClass, string> = {
  best: 'best',
  indistinguishable: 'not distinguishable from the best',
  worse: 'worse',
  rejected: 'rejected',
  other: 'other',
};

export interface ScoreChartOptions extends PlotSize {
  /** Score to chart; default R-factor when every shown candidate has one, else reduced chi-square. */
  metric?: 'rFactor' | 'reducedChiSquare' | 'chiSquare' | 'aic' | 'bic';
  /** Candidates shown, best first; default 25. */
  limit?: number;
  title?: string;
}

const METRIC_TITLES: Record<NonNullable<ScoreChartOptions['metric']>, string> = {
  rFactor: 'R-factor',
  reducedChiSquare: 'reduced χ²',
  chiSquare: 'χ²',
  aic: 'AIC',
  bic: 'BIC',
};

/** The band [lower, upper] of scores not distinguishable from the best, and where it came from. */
export function significanceBand(model: ReportModel, metric: NonNullable<ScoreChartOptions['metric']>): { lower: number; upper: number; source: string } | null {
  const scores = model.candidates.map((c) => c.stats[metric]).filter((x): x is number => x !== null && Number.isFinite(x));
  if (scores.length === 0) return null;
  const best = model.candidates.find((c) => c.verdictClass === 'best') ?? model.candidates[0];
  const bestScore = best.stats[metric];
  if (model.band && model.band.upper !== null && (model.band.metric === undefined || model.band.metric === metric)) {
    return { lower: model.band.lower ?? bestScore ?? Math.min(...scores), upper: model.band.upper, source: 'stated by the rank result' };
  }
  if (bestScore === null) return null;
  let upper = bestScore;
  let lower = bestScore;
  for (const c of model.candidates) {
    const s = c.stats[metric];
    if (c.verdictClass === 'indistinguishable' && s !== null && Number.isFinite(s)) {
      upper = Math.max(upper, s);
      lower = Math.min(lower, s);
    }
  }
  return { lower, upper, source: 'from the best score to the worst score judged not distinguishable from it' };
}

/**
 * The ranking's scores, best at the top, coloured by verdict, with the band of scores not
 * distinguishable from the best shaded.
 */
export function scoreChart(model: ReportModel, options: ScoreChartOptions = {}): Plot {
  const limit = options.limit ?? 25;
  const shown = model.candidates.slice(0, limit);
  const metric = options.metric ?? (shown.every((c) => c.stats.rFactor !== null) ? 'rFactor' : 'reducedChiSquare');
  const inches = widthInches(options.width);
  const labels = uniqueLabels(shown.map((c) => `${c.rank}. ${c.name}`));
  const rows = shown
    .map((c, i) => ({ candidate: labels[i], score: c.stats[metric], verdict: VERDICT_LEGEND[c.verdictClass], order: i }))
    .filter((r) => r.score !== null && Number.isFinite(r.score));
  const classes = (Object.keys(VERDICT_LEGEND) as VerdictClass[]).filter((v) => shown.some((c) => c.verdictClass === v));
  const band = significanceBand(model, metric);
  const bandLabel = 'band: not distinguishable';
  const domain = [...classes.map((v) => VERDICT_LEGEND[v]), ...(band ? [bandLabel] : [])];
  const range = [...classes.map((v) => VERDICT_COLOURS[v]), ...(band ? ['#BBBBBB'] : [])];
  const yLabelLimit = 170;
  // the legend below the whole figure, from its left edge (not the plotting area's)
  const legend = (symbolType: string): Json => ({
    title: null, symbolType, symbolSize: 60, symbolOpacity: 1, orient: 'none', direction: 'vertical', columns: 1,
    legendX: -yLabelLimit - 8, legendY: rows.length * 14 + 40, labelLimit: Math.round(inches * PX_PER_INCH - 40),
  });
  const build = (innerWidth: number): TopLevelSpec => {
    const layers: Json[] = [];
    if (band) {
      const upper = band.upper > band.lower ? band.upper : band.lower;
      layers.push({
        data: { values: [{ lower: band.lower, upper, what: bandLabel }] },
        mark: { type: 'rect', opacity: 0.45 },
        encoding: {
          x: { field: 'lower', type: 'quantitative' },
          x2: { field: 'upper' },
          color: { field: 'what', type: 'nominal', scale: { domain, range }, legend: legend('square') },
        },
      });
    }
    layers.push({
      data: { values: rows },
      mark: { type: 'point', filled: true, size: 40, opacity: 1 },
      encoding: {
        y: { field: 'candidate', type: 'nominal', sort: { field: 'order', order: 'ascending' }, axis: { title: null, labelLimit: yLabelLimit } },
        x: { field: 'score', type: 'quantitative', scale: { zero: false, nice: true, padding: 8 }, axis: { title: METRIC_TITLES[metric], tickCount: 4 } },
        color: { field: 'verdict', type: 'nominal', scale: { domain, range }, legend: legend('circle') },
      },
    });
    const spec: Json = {
      $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
      config: baseConfig(),
      title: { limit: Math.round(inches * PX_PER_INCH - 12), text: options.title ?? `Scores of the ${shown.length === model.candidates.length ? '' : `top ${shown.length} of `}${model.candidates.length} candidates` },
      width: innerWidth,
      height: { step: 14 },
      layer: layers,
      resolve: { scale: { color: 'shared' } },
    };
    return spec as unknown as TopLevelSpec;
  };
  const innerWidth = Math.max(100, Math.round(inches * PX_PER_INCH - yLabelLimit - 20));
  const notes = band ? [`band ${band.source}`] : ['no significance band: no score to draw it from'];
  if (shown.length < model.candidates.length) notes.push(`only the best ${shown.length} of ${model.candidates.length} candidates are drawn`);
  return { name: 'scores', title: `Scores (${METRIC_TITLES[metric]})`, spec: build(innerWidth), widthInches: inches, notes, innerWidth, rebuild: build };
}

// ---------------------------------------------------------------------------------------------
// Reduction plots (inputs structurally match the reduce stage's NormalisedSpectrum and Chi)

/** mu(E) and the lines of its normalisation; all arrays on `energy`. */
export interface MuPlotInput {
  energy: ArrayLike<number>;
  mu: ArrayLike<number>;
  preEdge?: ArrayLike<number>;
  postEdge?: ArrayLike<number>;
  /** mu0(E), the smooth atomic background. */
  background?: ArrayLike<number>;
  /** Edge energy, eV, drawn as a dashed rule. */
  e0?: number;
  title?: string;
}

/** mu(E) with the pre-edge line, the post-edge curve and the background; E0 marked. */
export function muPlot(input: MuPlotInput, size: PlotSize = {}): Plot {
  const series: LineSeries[] = [{ label: 'μ(E)', x: input.energy, y: input.mu, colour: DATA_COLOUR, dash: [], strokeWidth: 1.4 }];
  if (input.preEdge) series.push({ label: 'pre-edge line', x: input.energy, y: input.preEdge, colour: OKABE_ITO.blue, dash: [6, 3] });
  if (input.postEdge) series.push({ label: 'post-edge curve', x: input.energy, y: input.postEdge, colour: OKABE_ITO.vermillion, dash: [2, 2] });
  if (input.background) series.push({ label: 'background μ₀(E)', x: input.energy, y: input.background, colour: OKABE_ITO.bluishGreen, dash: [8, 3, 2, 3] });
  return stackedLinePlot('reduce-mu', {
    width: size.width,
    title: input.title ?? 'Absorption and its normalisation',
    xTitle: E_TITLE,
    xFormat: 'd',
    panels: [{ series, yTitle: 'μ(E) (absorbance)', height: 160, rules: input.e0 !== undefined ? [input.e0] : [] }],
  });
}

/** chi(k) on its grid, with the k-weight and optional window range of the transform. */
export interface ChiPlotInput {
  k: Float64Array;
  chi: Float64Array;
  kWeighting: number;
  window?: WindowSpec;
  label?: string;
  title?: string;
  /** Upper end of the R axis of {@link chiRPlot}, Å; default 6. */
  rMax?: number;
}

/** k^w chi(k) with the transform window range shaded. */
export function chiKPlot(input: ChiPlotInput, size: PlotSize = {}): Plot {
  return stackedLinePlot('reduce-chi-k', {
    width: size.width,
    title: input.title ?? 'k-weighted χ(k)',
    xTitle: K_TITLE,
    panels: [{
      series: [{ label: input.label ?? 'data', x: input.k, y: weighted(input.k, input.chi, input.kWeighting), colour: DATA_COLOUR, dash: [] }],
      yTitle: kWeightedTitle(input.kWeighting),
      height: 150,
      shade: input.window ? [{ from: input.window.min, to: input.window.max }] : [],
      zeroLine: true,
    }],
  });
}

/** |chi(R)| (and Re chi(R) dashed) of k^w chi(k) with the given window (default hann over the whole grid). */
export function chiRPlot(input: ChiPlotInput, size: PlotSize = {}): Plot {
  const window = input.window ?? { shape: 'hann', min: input.k[0], max: input.k[input.k.length - 1], taper: 1 };
  const spectrum = transformCurve(input.k, input.chi, input.kWeighting, window);
  if (!spectrum) throw new RangeError('chiRPlot: chi(k) must be finite on a uniform grid that starts at a multiple of its step');
  const s = upTo(spectrum, input.rMax ?? 6);
  return stackedLinePlot('reduce-chi-r', {
    width: size.width,
    title: input.title ?? 'Transform of k-weighted χ(k)',
    xTitle: R_TITLE,
    xDomain: [0, input.rMax ?? 6],
    panels: [{
      series: [
        { label: `|χ(R)|${input.label ? ` ${input.label}` : ''}`, x: s.x, y: magnitude(s), colour: DATA_COLOUR, dash: [], strokeWidth: 1.5 },
        { label: 'Re χ(R)', x: s.x, y: s.re, colour: OKABE_ITO.blue, dash: [4, 2], strokeWidth: 1 },
      ],
      yTitle: `|χ(R)|, Re χ(R) (${inverseAngstrom(input.kWeighting + 1)})`,
      height: 150,
      zeroLine: true,
    }],
  });
}

// ---------------------------------------------------------------------------------------------
// Rendering

export interface RenderOptions {
  /** Also render a PNG; default true. */
  png?: boolean;
  /** PNG density, dots per inch; default 300. */
  dpi?: number;
  /** Folder of the DejaVu fonts; default Debian's. */
  fontFolder?: string;
}

/** A rendered plot. */
export interface RenderedPlot extends Plot {
  /** Standalone SVG, sized in inches (width = the column width). */
  svg: string;
  /** The SVG's intrinsic size in user units (px at 96/in) before scaling to the column. */
  viewBox: { width: number; height: number };
  heightInches: number;
  png?: Uint8Array;
  pngSize?: { width: number; height: number };
  /** Set when the DejaVu fonts were missing and system fonts were used. */
  fontWarning?: string;
  /** Warnings of the Vega-Lite compiler and Vega (kept, never printed). */
  warnings: string[];
}

/** A Vega logger that keeps messages instead of printing them. */
function collectingLogger(messages: string[]): vega.LoggerInterface {
  let level = vega.Warn;
  const logger: vega.LoggerInterface = {
    level(value?: number) {
      if (value === undefined) return level;
      level = value;
      return logger;
    },
    error(...args: unknown[]) { messages.push(`error: ${args.map(String).join(' ')}`); return logger; },
    warn(...args: unknown[]) { if (level >= vega.Warn) messages.push(args.map(String).join(' ')); return logger; },
    info() { return logger; },
    debug() { return logger; },
  };
  return logger;
}

/** Render a Vega-Lite spec to SVG text (Vega's own output, sized in px). */
export async function specToSvg(spec: TopLevelSpec, warnings: string[] = []): Promise<string> {
  const logger = collectingLogger(warnings);
  const compiled = vl.compile(spec, { logger }).spec;
  const view = new vega.View(vega.parse(compiled), { renderer: 'none', logger });
  try {
    return await view.toSVG();
  } finally {
    view.finalize();
  }
}

/** Width and height (px) of an SVG root element as Vega writes it. */
export function svgSize(svg: string): { width: number; height: number } {
  const root = /<svg\b[^>]*>/.exec(svg)?.[0] ?? '';
  const width = Number(/\swidth="([\d.]+)"/.exec(root)?.[1]);
  const height = Number(/\sheight="([\d.]+)"/.exec(root)?.[1]);
  if (!(width > 0) || !(height > 0)) throw new RangeError('the SVG has no numeric width and height');
  return { width, height };
}

/** The SVG with its root's width and height set in inches (the viewBox keeps the drawing). */
function withPhysicalSize(svg: string, widthIn: number, heightIn: number): string {
  return svg.replace(/<svg\b[^>]*>/, (root) =>
    root.replace(/\swidth="[\d.]+"/, ` width="${widthIn.toFixed(3)}in"`).replace(/\sheight="[\d.]+"/, ` height="${heightIn.toFixed(3)}in"`),
  );
}

/** SVG text to PNG bytes at `pixelWidth`, with DejaVu Sans (or system fonts, with a warning). */
export function svgToPng(svg: string, pixelWidth: number, fontFolder = DEJAVU_FOLDER): { png: Uint8Array; fontWarning?: string } {
  const fontFiles = plotFontFiles(fontFolder);
  const fontWarning = fontFiles.length === 0 ? `DejaVu Sans not found in ${fontFolder}: the PNG used the system's fonts and may differ between machines` : undefined;
  const resvg = new Resvg(svg, {
    fitTo: { mode: 'width', value: pixelWidth },
    background: 'white',
    font: fontFiles.length > 0
      ? { loadSystemFonts: false, fontFiles, defaultFontFamily: 'DejaVu Sans', sansSerifFamily: 'DejaVu Sans' }
      : { loadSystemFonts: true },
  });
  const png = resvg.render().asPng();
  return { png: new Uint8Array(png.buffer, png.byteOffset, png.byteLength), fontWarning };
}

/** Render a plot to a standalone SVG (sized to its column width in inches) and optionally a PNG. */
export async function renderPlot(plot: Plot, options: RenderOptions = {}): Promise<RenderedPlot> {
  const warnings: string[] = [];
  let finalSpec = plot.spec;
  let raw = await specToSvg(plot.spec, warnings);
  const target = plot.widthInches * PX_PER_INCH;
  const first = svgSize(raw).width;
  if (plot.rebuild && plot.innerWidth !== undefined) {
    // Vega-Lite sizes the plotting area, not the whole figure: correct the area (at most three
    // times) so the figure comes out at the column's width
    let inner = plot.innerWidth;
    let width = first;
    for (let attempt = 0; attempt < 3 && Math.abs(width - target) > 2; attempt++) {
      const next = Math.max(60, Math.round(inner + target - width));
      if (next === inner) break;
      inner = next;
      const spec = plot.rebuild(inner);
      const attemptWarnings: string[] = [];
      const svg = await specToSvg(spec, attemptWarnings);
      const attemptWidth = svgSize(svg).width;
      if (Math.abs(attemptWidth - target) < Math.abs(width - target)) {
        raw = svg;
        finalSpec = spec;
        warnings.length = 0;
        warnings.push(...attemptWarnings);
      }
      width = attemptWidth;
    }
  }
  const viewBox = svgSize(raw);
  const heightInches = (plot.widthInches * viewBox.height) / viewBox.width;
  const rendered: RenderedPlot = { ...plot, spec: finalSpec, svg: withPhysicalSize(raw, plot.widthInches, heightInches), viewBox, heightInches, warnings };
  if (options.png ?? true) {
    const dpi = options.dpi ?? 300;
    const { png, fontWarning } = svgToPng(raw, Math.round(plot.widthInches * dpi), options.fontFolder);
    rendered.png = withPngDensity(png, dpi);
    rendered.pngSize = pngDimensions(rendered.png);
    if (fontWarning) rendered.fontWarning = fontWarning;
  }
  return rendered;
}

// ---------------------------------------------------------------------------------------------
// PNG chunks (W3C Portable Network Graphics (PNG) Specification, 2nd ed., ISO/IEC 15948:2003)

const PNG_SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

const CRC_TABLE = (() => {
  const table = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    table[n] = c >>> 0;
  }
  return table;
})();

/** CRC-32 of a byte range, as PNG chunks use it (PNG spec, annex D). */
export function crc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (let i = 0; i < bytes.length; i++) c = CRC_TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/** True when the bytes start with the PNG signature (PNG spec, section 5.2). */
export function isPng(bytes: Uint8Array): boolean {
  return bytes.length > 8 && PNG_SIGNATURE.every((b, i) => bytes[i] === b);
}

/** Width and height from the IHDR chunk. */
export function pngDimensions(png: Uint8Array): { width: number; height: number } {
  if (!isPng(png)) throw new RangeError('not a PNG');
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  return { width: view.getUint32(16), height: view.getUint32(20) };
}

/** The PNG's pixel density in dots per inch from its pHYs chunk, or null when it has none. */
export function pngDensity(png: Uint8Array): number | null {
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  let offset = 8;
  while (offset + 8 <= png.length) {
    const length = view.getUint32(offset);
    const type = String.fromCharCode(...png.subarray(offset + 4, offset + 8));
    if (type === 'pHYs' && png[offset + 16] === 1) return view.getUint32(offset + 8) * 0.0254;
    if (type === 'IDAT') return null;
    offset += 12 + length;
  }
  return null;
}

/** The PNG with a pHYs chunk stating `dpi` (pixels per metre = dpi / 0.0254), placed after IHDR. */
export function withPngDensity(png: Uint8Array, dpi: number): Uint8Array {
  if (!isPng(png)) throw new RangeError('not a PNG');
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  const ihdrEnd = 8 + 12 + view.getUint32(8);
  // drop an existing pHYs chunk
  const parts: Uint8Array[] = [png.subarray(0, ihdrEnd)];
  const perMetre = Math.round(dpi / 0.0254);
  const chunk = new Uint8Array(21);
  const c = new DataView(chunk.buffer);
  c.setUint32(0, 9);
  chunk.set([0x70, 0x48, 0x59, 0x73], 4); // "pHYs"
  c.setUint32(8, perMetre);
  c.setUint32(12, perMetre);
  chunk[16] = 1; // unit: metre
  c.setUint32(17, crc32(chunk.subarray(4, 17)));
  parts.push(chunk);
  let offset = ihdrEnd;
  while (offset + 8 <= png.length) {
    const length = view.getUint32(offset);
    const type = String.fromCharCode(...png.subarray(offset + 4, offset + 8));
    if (type !== 'pHYs') parts.push(png.subarray(offset, offset + 12 + length));
    offset += 12 + length;
  }
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let at = 0;
  for (const p of parts) { out.set(p, at); at += p.length; }
  return out;
}

/** The fits of a report that carry curves, best first, labelled by name, at most `top`. */
export function fitsWithCurves(model: ReportModel, top = 3): LabelledCurves[] {
  return model.candidates
    .filter((c): c is CandidateView & { curves: CurvesView } => c.curves !== undefined)
    .slice(0, top)
    .map((c) => ({ label: model.kind === 'fit' ? 'model' : c.name, curves: c.curves }));
}
