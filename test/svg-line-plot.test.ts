import { describe, expect, it } from 'vitest';
import { MAX_DRAWN_POINTS, svgLinePlot } from '../shared/plots/svg-line-plot.js';

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

  it('plots 200 000 points, drawing at most MAX_DRAWN_POINTS of them, the first, the last and the extremes among them', () => {
    // A bench sampling every 10 us for 2 s (common practice for long records), with one spike up and one down.
    const length = 200_000;
    const x = Float64Array.from({ length }, (_, i) => (i + 1) * 1e-5);
    const y = Float64Array.from(x, (t) => 1 - Math.exp(-t / 0.1));
    y[150_000] = 2;
    y[150_001] = -1;
    const polyline = (xs: ArrayLike<number>, ys: ArrayLike<number>) =>
      svgLinePlot({ title: 't', xLabel: 'x', yLabel: 'y', xLog: true, yLog: false, series: [{ label: 's', x: xs, y: ys }] }).match(/<polyline points="([^"]*)"/)![1].split(' ');
    const drawn = polyline(x, y);
    expect(drawn.length).toBeLessThanOrEqual(MAX_DRAWN_POINTS);
    // These four points span the same axes, so the plot of them alone, every point drawn, says where they go.
    const keyIndices = [0, 150_000, 150_001, length - 1];
    const keyPoints = polyline(keyIndices.map((i) => x[i]), keyIndices.map((i) => y[i]));
    expect(drawn[0]).toBe(keyPoints[0]);
    expect(drawn.at(-1)).toBe(keyPoints[3]);
    expect(drawn).toContain(keyPoints[1]);
    expect(drawn).toContain(keyPoints[2]);
  });
});
