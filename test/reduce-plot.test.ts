/**
 * The interim SVG line-plot writer used by `reduce --plot` (src/report/svg-lines.ts): tick
 * choice (steps of 1, 2 or 5 x 10^n; common practice, no source), escaping, gaps at non-finite
 * values, and a well-formed document with the Okabe-Ito colours (Okabe and Ito 2008).
 */
import { describe, expect, it } from 'vitest';
import { niceTicks, OKABE_ITO, renderLinePanels } from '../src/report/svg-lines';

describe('svg line plots', () => {
  it('chooses ticks in steps of 1, 2 or 5 times a power of ten', () => {
    expect(niceTicks(0, 10)).toEqual([0, 2, 4, 6, 8, 10]);
    expect(niceTicks(8779, 10146)).toEqual([9000, 9500, 10000]);
    expect(niceTicks(-0.013, 0.021, 5)).toEqual([-0.01, 0, 0.01, 0.02]);
  });
  it('writes a well-formed document with escaped labels, a legend entry per series and gaps at NaN', () => {
    const svg = renderLinePanels(
      [{ title: 'a < b & c', xLabel: 'k (Å⁻¹)', yLabel: 'k²χ(k)', series: [
        { label: 'one', x: [0, 1, 2, 3, 4], y: [0, 1, NaN, 1, 0] },
        { label: 'two', x: [0, 4], y: [1, 1], dashed: true },
      ] }],
      { title: 'test' },
    );
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(svg.trim().endsWith('</svg>')).toBe(true);
    expect(svg).toContain('a &lt; b &amp; c');
    expect(svg).toContain('k (Å⁻¹)');
    expect(svg.match(/<polyline/g)).toHaveLength(3); // 'one' split in two at the NaN, plus 'two'
    expect(svg).toContain(`stroke="${OKABE_ITO[0]}"`);
    expect(svg).toContain(`stroke="${OKABE_ITO[1]}"`);
    expect(svg).toContain('stroke-dasharray');
    expect((svg.match(/<g>/g) ?? []).length).toBe((svg.match(/<\/g>/g) ?? []).length);
  });
});
