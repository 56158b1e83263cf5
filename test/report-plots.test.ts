import { describe, it, expect } from 'vitest';
import {
  chiKPlot,
  chiRPlot,
  chiRTitle,
  COLUMN_WIDTH_INCHES,
  crc32,
  fitsWithCurves,
  isPng,
  kOverlayPlot,
  kWeightedTitle,
  muPlot,
  OKABE_ITO,
  plotFontFiles,
  pngDensity,
  pngDimensions,
  renderPlot,
  rOverlayPlot,
  scoreChart,
  shellContributionsPlot,
  significanceBand,
  superscript,
  withPngDensity,
  type Plot,
  type RenderedPlot,
} from '../src/report/plots';
import { reportModelFrom } from '../src/report/types';
import { fabricatedRank } from './helpers/report-fixtures';

/** Text of every axis title in a Vega SVG (tspans joined by a space). */
function axisTitles(svg: string): string[] {
  return [...svg.matchAll(/role-axis-title"[^>]*><text[^>]*>(.*?)<\/text>/g)].map((m) => m[1].replace(/<\/tspan><tspan[^>]*>/g, ' ').replace(/<[^>]+>/g, ''));
}
/** Text of every legend label. */
function legendLabels(svg: string): string[] {
  return [...svg.matchAll(/role-legend-label"[^>]*><text[^>]*>(.*?)<\/text>/g)].map((m) => m[1]);
}
/** Stroke colours of the drawn lines (mark-line groups). */
function lineColours(svg: string): Set<string> {
  const colours = new Set<string>();
  for (const group of svg.matchAll(/class="mark-line role-mark[^"]*"[^>]*>(.*?)<\/g>/g)) {
    for (const m of group[1].matchAll(/stroke="(#[0-9A-Fa-f]{6})"/g)) colours.add(m[1].toUpperCase());
  }
  return colours;
}
/** Fill colours of symbol marks (points). */
function pointColours(svg: string): Set<string> {
  const colours = new Set<string>();
  for (const group of svg.matchAll(/class="mark-symbol role-mark[^"]*"[^>]*>(.*?)<\/g>/g)) {
    for (const m of group[1].matchAll(/fill="(#[0-9A-Fa-f]{6})"/g)) colours.add(m[1].toUpperCase());
  }
  return colours;
}

const PALETTE = new Set(Object.values(OKABE_ITO).map((c) => c.toUpperCase()));
const model = reportModelFrom(JSON.parse(JSON.stringify(fabricatedRank())));
const fits = fitsWithCurves(model, 3);
const chi = fits[0].curves;

// A fabricated mu(E) (test fixture, not data): a step at 9000 eV on a sloping line with a wiggle.
const energy = Float64Array.from({ length: 300 }, (_, i) => 8800 + 2 * i);
const pre = energy.map((e) => 0.2 - 1e-5 * (e - 8800));
const post = energy.map((e) => 1.2 - 1e-4 * (e - 9000));
const mu = energy.map((e, i) => (e < 9000 ? pre[i] : post[i] + 0.02 * Math.sin((e - 9000) / 12)));

interface Case { plot: Plot; titles: string[] }
const cases: Case[] = [
  { plot: kOverlayPlot(fits), titles: ['k (Å⁻¹)', 'k²χ(k) (Å⁻²)', 'residual (Å⁻²)'] },
  { plot: rOverlayPlot(fits), titles: ['R (Å)', '|χ(R)| (Å⁻³)', 'Re χ(R) (Å⁻³)', 'residual (Å⁻³)'] },
  { plot: shellContributionsPlot('shells', fits[0]), titles: ['R (Å)', '|χ(R)| (Å⁻³)'] },
  { plot: scoreChart(model), titles: ['R-factor'] },
  { plot: muPlot({ energy, mu, preEdge: pre, postEdge: post, background: post, e0: 9000 }), titles: ['E (eV)', 'μ(E) (absorbance)'] },
  { plot: chiKPlot({ k: chi.k, chi: chi.data, kWeighting: 3, window: { shape: 'hann', min: 3, max: 14, taper: 1 } }), titles: ['k (Å⁻¹)', 'k³χ(k) (Å⁻³)'] },
  { plot: chiRPlot({ k: chi.k, chi: chi.data, kWeighting: 1, window: { shape: 'hann', min: 3, max: 14, taper: 1 } }), titles: ['R (Å)', '|χ(R)|, Re χ(R) (Å⁻²)'] },
];

describe('plot units and symbols', () => {
  it('writes k-weights and inverse-Ångström units as Unicode superscripts', () => {
    expect(superscript(-3)).toBe('⁻³');
    expect(kWeightedTitle(0)).toBe('χ(k)');
    expect(kWeightedTitle(1)).toBe('kχ(k) (Å⁻¹)');
    expect(kWeightedTitle(2)).toBe('k²χ(k) (Å⁻²)');
    // |chi(R)| of k^w chi(k) carries Å^-(w+1): the transform integrates over dk (1/Å), so 1/Å^3 for w = 2
    expect(chiRTitle(2)).toBe('|χ(R)| (Å⁻³)');
    expect(chiRTitle(0, 'real')).toBe('Re χ(R) (Å⁻¹)');
  });
});

describe('Okabe-Ito palette', () => {
  it('matches the RGB values published by Wong (Nature Methods 8, 441 (2011), Fig. 2)', () => {
    // RGB 0-255 from Wong 2011 (from memory): black 0,0,0; orange 230,159,0; sky blue 86,180,233;
    // bluish green 0,158,115; yellow 240,228,66; blue 0,114,178; vermillion 213,94,0; reddish purple 204,121,167
    const published: Record<string, [number, number, number]> = {
      black: [0, 0, 0], orange: [230, 159, 0], skyBlue: [86, 180, 233], bluishGreen: [0, 158, 115],
      yellow: [240, 228, 66], blue: [0, 114, 178], vermillion: [213, 94, 0], reddishPurple: [204, 121, 167],
    };
    for (const [name, rgb] of Object.entries(published)) {
      const hex = OKABE_ITO[name as keyof typeof OKABE_ITO];
      expect([1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16))).toEqual(rgb);
    }
  });
});

describe('PNG chunks', () => {
  it('computes the standard CRC-32 check value 0xCBF43926 of "123456789"', () => {
    // check value of CRC-32 (ISO-HDLC, as PNG uses it): R. Williams, "A painless guide to CRC error
    // detection algorithms" (1993), and the PNG specification annex D (from memory)
    expect(crc32(new TextEncoder().encode('123456789'))).toBe(0xcbf43926);
  });
});

describe.each(cases)('plot $plot.name', ({ plot, titles }) => {
  let rendered: RenderedPlot;
  it('renders to SVG with axis titles carrying symbols and units', async () => {
    rendered = await renderPlot(plot);
    const found = axisTitles(rendered.svg);
    for (const t of titles) expect(found).toContain(t);
    expect(rendered.warnings).toEqual([]);
  });

  it('has a legend naming every series', () => {
    expect(rendered.svg).toContain('aria-roledescription="legend"');
    const labels = legendLabels(rendered.svg);
    expect(labels.length).toBeGreaterThan(0);
    if (plot.name === 'fit-k') expect(labels).toEqual(['data', ...fits.map((f) => f.label)]);
  });

  it('draws only Okabe-Ito colours', () => {
    const colours = plot.name === 'scores' ? pointColours(rendered.svg) : lineColours(rendered.svg);
    expect(colours.size).toBeGreaterThan(0);
    for (const c of colours) expect(PALETTE.has(c)).toBe(true);
  });

  it('is one journal column wide (3.35 in) and renders a 300 dpi PNG of 1005 px', () => {
    // 85 mm single column = 3.35 in (common practice of journal guidelines); 3.35 in x 300 dpi = 1005 px
    expect(rendered.svg).toMatch(/<svg[^>]*\swidth="3\.350in"/);
    // the drawing is scaled to exactly 3.35 in; its own width is fitted to within 2 % (fonts scale by less)
    expect(Math.abs(rendered.viewBox.width / (COLUMN_WIDTH_INCHES.single * 96) - 1)).toBeLessThan(0.02);
    const png = rendered.png!;
    // PNG signature 89 50 4E 47 0D 0A 1A 0A (W3C PNG specification, section 5.2)
    expect(isPng(png)).toBe(true);
    expect(pngDimensions(png).width).toBe(1005);
    expect(pngDimensions(png).height).toBe(Math.round((1005 * rendered.viewBox.height) / rendered.viewBox.width));
    // pHYs: 300 dpi = 11811 px/m (PNG spec 11.3.5.3, unit metre); read back within the rounding of px/m
    expect(pngDensity(png)!).toBeCloseTo(300, 0);
    expect(png.length).toBeGreaterThan(20_000); // a drawn plot, not a blank page
  });
});

describe('rendering details', () => {
  it('uses DejaVu Sans when it is installed and says so when it is not', async () => {
    const rendered = await renderPlot(cases[0].plot, { fontFolder: '/nonexistent-font-folder' });
    expect(rendered.fontWarning).toMatch(/DejaVu Sans not found/);
    if (plotFontFiles().length > 0) expect((await renderPlot(cases[0].plot)).fontWarning).toBeUndefined();
  });

  it('writes the pHYs chunk with a valid CRC right after IHDR, replacing an old one', () => {
    const png = withPngDensity(withPngDensity(minimalPng(), 72), 600);
    const view = new DataView(png.buffer, png.byteOffset);
    expect(String.fromCharCode(...png.subarray(37, 41))).toBe('pHYs');
    expect(view.getUint32(50)).toBe(crc32(png.subarray(37, 50))); // chunk: length 33-36, type 37-40, data 41-49, CRC 50-53
    expect(pngDensity(png)!).toBeCloseTo(600, 0);
    expect(png.length).toBe(minimalPng().length + 21);
  });

  it('sizes plots for wider columns', async () => {
    const rendered = await renderPlot(kOverlayPlot(fits, { width: 'double' }), { png: false });
    expect(rendered.svg).toMatch(/width="7\.000in"/);
    expect(rendered.png).toBeUndefined();
  });

  it('escapes user text (series labels) in the SVG', async () => {
    const evil = [{ label: '<script>alert("x")</script> & co', curves: chi }];
    const rendered = await renderPlot(kOverlayPlot(evil), { png: false });
    expect(rendered.svg).not.toContain('<script');
    expect(rendered.svg).toContain('&lt;script&gt;');
  });

  it('draws the significance band from the best score to the worst indistinguishable one', () => {
    const band = significanceBand(model, 'rFactor')!;
    expect(band.lower).toBe(model.candidates[0].stats.rFactor);
    expect(band.upper).toBe(model.candidates[1].stats.rFactor); // the fixture's only "not distinguishable" candidate
    const stated = significanceBand({ ...model, band: { metric: 'rFactor', lower: 0.01, upper: 0.05 } }, 'rFactor')!;
    expect(stated).toMatchObject({ lower: 0.01, upper: 0.05 });
  });
});

/** The smallest valid PNG: 1x1 grey, built by hand from the PNG specification's chunk layout. */
function minimalPng(): Uint8Array {
  const chunk = (type: string, data: number[]) => {
    const body = new Uint8Array([...type].map((c) => c.charCodeAt(0)).concat(data));
    const out = new Uint8Array(12 + data.length);
    const v = new DataView(out.buffer);
    v.setUint32(0, data.length);
    out.set(body, 4);
    v.setUint32(8 + data.length, crc32(body));
    return [...out];
  };
  // IDAT: zlib stream of the one scanline [filter 0, grey 0x80], stored (uncompressed) block
  const raw = [0, 0x80];
  let a = 1, b = 0;
  for (const x of raw) { a = (a + x) % 65521; b = (b + a) % 65521; }
  const zlib = [0x78, 0x01, 0x01, 0x02, 0x00, 0xfd, 0xff, ...raw, (b >> 8) & 255, b & 255, (a >> 8) & 255, a & 255];
  return new Uint8Array([
    0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a,
    ...chunk('IHDR', [0, 0, 0, 1, 0, 0, 0, 1, 8, 0, 0, 0, 0]),
    ...chunk('IDAT', zlib),
    ...chunk('IEND', []),
  ]);
}
