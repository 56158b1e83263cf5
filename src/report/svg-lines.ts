/**
 * A small, self-contained SVG writer for line plots: one or more panels stacked vertically, each
 * with axes, axis labels with units, "nice" ticks (steps of 1, 2 or 5 times a power of ten;
 * common practice, no source), a legend, and the colour-blind-safe Okabe-Ito palette (Okabe and
 * Ito, "Color Universal Design", 2008). Interim: a reporting issue will replace it with a
 * plotting library. Pure function of its input; no fonts or scripts are embedded.
 */

/** Okabe-Ito colours, black first, yellow (poor on white) last. */
export const OKABE_ITO: readonly string[] = ['#000000', '#E69F00', '#56B4E9', '#009E73', '#0072B2', '#D55E00', '#CC79A7', '#F0E442'];

export interface LineSeries {
  label: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** Draw dashed (for fitted or auxiliary lines). */
  dashed?: boolean;
}

export interface LinePanel {
  title: string;
  /** Axis labels including units, e.g. "E (eV)". */
  xLabel: string;
  yLabel: string;
  series: LineSeries[];
  /** Fixed x range; default the data range. */
  xRange?: [number, number];
  /** Fixed y range; default the data range (within xRange) with a 5 % margin. */
  yRange?: [number, number];
}

export interface SvgOptions {
  width?: number;
  panelHeight?: number;
  title?: string;
}

function escapeXml(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/** Ticks covering [lo, hi] with about `target` steps of 1, 2 or 5 x 10^n. */
export function niceTicks(lo: number, hi: number, target = 6): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / target;
  const power = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw) ?? 10 * power;
  const out: number[] = [];
  for (let t = Math.ceil(lo / step - 1e-9) * step; t <= hi + step * 1e-9; t += step) out.push(Math.abs(t) < step * 1e-9 ? 0 : t);
  return out;
}

function formatTick(v: number): string {
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(1);
  return String(Number(v.toPrecision(6)));
}

function dataRange(panel: LinePanel): { x: [number, number]; y: [number, number] } {
  let x0 = Infinity, x1 = -Infinity;
  for (const s of panel.series) for (let i = 0; i < s.x.length; i++) if (Number.isFinite(s.x[i]) && Number.isFinite(s.y[i])) {
    x0 = Math.min(x0, s.x[i]);
    x1 = Math.max(x1, s.x[i]);
  }
  const x: [number, number] = panel.xRange ?? (x1 > x0 ? [x0, x1] : [0, 1]);
  let y0 = Infinity, y1 = -Infinity;
  for (const s of panel.series) for (let i = 0; i < s.x.length; i++) {
    const xi = s.x[i], yi = s.y[i];
    if (Number.isFinite(xi) && Number.isFinite(yi) && xi >= x[0] && xi <= x[1]) {
      y0 = Math.min(y0, yi);
      y1 = Math.max(y1, yi);
    }
  }
  if (!(y1 > y0)) {
    const c = Number.isFinite(y0) ? y0 : 0;
    y0 = c - 1;
    y1 = c + 1;
  }
  const margin = 0.05 * (y1 - y0);
  return { x, y: panel.yRange ?? [y0 - margin, y1 + margin] };
}

/** Render panels as one SVG document (a string). */
export function renderLinePanels(panels: readonly LinePanel[], options: SvgOptions = {}): string {
  const width = options.width ?? 760;
  const panelHeight = options.panelHeight ?? 300;
  const top = options.title ? 36 : 10;
  const height = top + panels.length * panelHeight;
  const left = 78, right = 24, padTop = 34, padBottom = 52;
  const out: string[] = [];
  out.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" font-family="sans-serif" font-size="12">`);
  out.push(`<rect width="${width}" height="${height}" fill="#ffffff"/>`);
  if (options.title) out.push(`<text x="${width / 2}" y="24" text-anchor="middle" font-size="15">${escapeXml(options.title)}</text>`);
  panels.forEach((panel, p) => {
    const y0 = top + p * panelHeight + padTop;
    const plotW = width - left - right;
    const plotH = panelHeight - padTop - padBottom;
    const { x: xr, y: yr } = dataRange(panel);
    const sx = (v: number) => left + ((v - xr[0]) / (xr[1] - xr[0])) * plotW;
    const sy = (v: number) => y0 + plotH - ((v - yr[0]) / (yr[1] - yr[0])) * plotH;
    out.push(`<g>`);
    out.push(`<text x="${left}" y="${y0 - 10}" font-size="13">${escapeXml(panel.title)}</text>`);
    out.push(`<rect x="${left}" y="${y0}" width="${plotW}" height="${plotH}" fill="none" stroke="#000000"/>`);
    for (const t of niceTicks(xr[0], xr[1])) {
      const x = sx(t).toFixed(1);
      out.push(`<line x1="${x}" y1="${y0 + plotH}" x2="${x}" y2="${y0 + plotH + 5}" stroke="#000000"/>`);
      out.push(`<text x="${x}" y="${y0 + plotH + 18}" text-anchor="middle">${formatTick(t)}</text>`);
    }
    for (const t of niceTicks(yr[0], yr[1], 5)) {
      const y = sy(t).toFixed(1);
      out.push(`<line x1="${left - 5}" y1="${y}" x2="${left}" y2="${y}" stroke="#000000"/>`);
      out.push(`<text x="${left - 8}" y="${y}" text-anchor="end" dominant-baseline="middle">${formatTick(t)}</text>`);
    }
    out.push(`<text x="${left + plotW / 2}" y="${y0 + plotH + 40}" text-anchor="middle">${escapeXml(panel.xLabel)}</text>`);
    out.push(`<text transform="translate(18 ${y0 + plotH / 2}) rotate(-90)" text-anchor="middle">${escapeXml(panel.yLabel)}</text>`);
    out.push(`<clipPath id="clip${p}"><rect x="${left}" y="${y0}" width="${plotW}" height="${plotH}"/></clipPath>`);
    panel.series.forEach((s, i) => {
      const colour = OKABE_ITO[i % OKABE_ITO.length];
      const segments: string[][] = [[]];
      for (let j = 0; j < s.x.length; j++) {
        if (!Number.isFinite(s.x[j]) || !Number.isFinite(s.y[j])) {
          if (segments[segments.length - 1].length) segments.push([]);
          continue;
        }
        segments[segments.length - 1].push(`${sx(s.x[j]).toFixed(2)},${sy(s.y[j]).toFixed(2)}`);
      }
      for (const seg of segments) {
        if (seg.length < 2) continue;
        out.push(`<polyline clip-path="url(#clip${p})" fill="none" stroke="${colour}" stroke-width="1.5"${s.dashed ? ' stroke-dasharray="6 4"' : ''} points="${seg.join(' ')}"/>`);
      }
      const ly = y0 + 16 + i * 16;
      const lx = left + plotW - 170;
      out.push(`<line x1="${lx}" y1="${ly}" x2="${lx + 24}" y2="${ly}" stroke="${colour}" stroke-width="2"${s.dashed ? ' stroke-dasharray="6 4"' : ''}/>`);
      out.push(`<text x="${lx + 30}" y="${ly}" dominant-baseline="middle">${escapeXml(s.label)}</text>`);
    });
    out.push(`</g>`);
  });
  out.push(`</svg>`);
  return out.join('\n') + '\n';
}
