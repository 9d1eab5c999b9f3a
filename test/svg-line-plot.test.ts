import { describe, expect, it } from 'vitest';
import { svgLinePlot } from '../shared/plots/svg-line-plot.js';

describe('svgLinePlot', () => {
  const plot = svgLinePlot({
    title: 'Zth <of> "A&B"', xLabel: 'time [s]', yLabel: 'Zth [K/W]', xLog: true, yLog: false,
    series: [{ label: 'a', x: [1e-6, 1e-3, 1], y: [0, 0.5, 1] }, { label: 'b', x: [1e-6, 1], y: [0.1, 0.9], bars: true }],
  });

  it('is one SVG document with escaped text (XML 1.0 predefined entities)', () => {
    expect(plot.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(plot.trim().endsWith('</svg>')).toBe(true);
    expect(plot).toContain('Zth &lt;of&gt; &quot;A&amp;B&quot;');
    expect(plot).not.toMatch(/<of>/);
  });

  it('draws a line and bars, with decade ticks spanning the log axis', () => {
    expect(plot.match(/<polyline /g)).toHaveLength(1);
    expect(plot).toMatch(/<path d="M[\d.]+,[\d.]+V[\d.]+/);
    for (const tick of ['1e-6', '1e-3', '1e0']) expect(plot).toContain(`>${tick}<`);
  });

  it('leaves out points a log axis cannot show', () => {
    const svg = svgLinePlot({ title: 't', xLabel: 'x', yLabel: 'y', xLog: false, yLog: true, series: [{ label: 's', x: [0, 1, 2], y: [0, 10, 100] }] });
    expect(svg.match(/<polyline points="([^"]*)"/)![1].split(' ')).toHaveLength(2);
  });
});
