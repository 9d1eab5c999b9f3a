/**
 * A small, dependency-free SVG line plot with linear or logarithmic axes:
 * enough for Zth, spectra and structure functions to be looked at in a
 * browser or embedded in a report, without a plotting stack on the server.
 */

export interface PlotSeries {
  label: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** Bars from the x axis (a spectrum) instead of a line. */
  bars?: boolean;
}

export interface LinePlot {
  title: string;
  xLabel: string;
  yLabel: string;
  xLog: boolean;
  yLog: boolean;
  series: PlotSeries[];
  /** A line under the plot, e.g. the caution. */
  footnote?: string;
}

const WIDTH = 720;
const HEIGHT = 440;
const MARGIN = { left: 78, right: 24, top: 40, bottom: 78 };
const COLOURS = ['#1f5fa8', '#c4572a', '#3d8b3d', '#7a4fa0', '#8a6d1e'];

export function svgLinePlot(plot: LinePlot): string {
  const points = plot.series.flatMap((s) => Array.from(s.x, (x, i) => [x, s.y[i]] as const)).filter(([x, y]) => usable(x, plot.xLog) && usable(y, plot.yLog));
  const xAxis = axis(points.map(([x]) => x), plot.xLog);
  const yAxis = axis(points.map(([, y]) => y).concat(plot.yLog ? [] : [0]), plot.yLog);
  const plotWidth = WIDTH - MARGIN.left - MARGIN.right;
  const plotHeight = HEIGHT - MARGIN.top - MARGIN.bottom;
  const px = (x: number) => MARGIN.left + plotWidth * xAxis.fraction(x);
  const py = (y: number) => MARGIN.top + plotHeight * (1 - yAxis.fraction(y));

  const parts: string[] = [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${WIDTH}" height="${HEIGHT}" viewBox="0 0 ${WIDTH} ${HEIGHT}" font-family="sans-serif" font-size="12">`,
    `<rect width="${WIDTH}" height="${HEIGHT}" fill="#ffffff"/>`,
    `<text x="${WIDTH / 2}" y="22" text-anchor="middle" font-size="15">${escapeXml(plot.title)}</text>`,
  ];
  for (const tick of xAxis.ticks) {
    const x = px(tick).toFixed(1);
    parts.push(`<line x1="${x}" y1="${MARGIN.top}" x2="${x}" y2="${MARGIN.top + plotHeight}" stroke="#e4e4e4"/>`);
    parts.push(`<text x="${x}" y="${MARGIN.top + plotHeight + 16}" text-anchor="middle">${formatTick(tick, plot.xLog)}</text>`);
  }
  for (const tick of yAxis.ticks) {
    const y = py(tick).toFixed(1);
    parts.push(`<line x1="${MARGIN.left}" y1="${y}" x2="${MARGIN.left + plotWidth}" y2="${y}" stroke="#e4e4e4"/>`);
    parts.push(`<text x="${MARGIN.left - 6}" y="${y}" text-anchor="end" dominant-baseline="middle">${formatTick(tick, plot.yLog)}</text>`);
  }
  parts.push(`<rect x="${MARGIN.left}" y="${MARGIN.top}" width="${plotWidth}" height="${plotHeight}" fill="none" stroke="#555555"/>`);
  parts.push(`<text x="${MARGIN.left + plotWidth / 2}" y="${HEIGHT - 44}" text-anchor="middle">${escapeXml(plot.xLabel)}</text>`);
  parts.push(`<text transform="translate(18 ${MARGIN.top + plotHeight / 2}) rotate(-90)" text-anchor="middle">${escapeXml(plot.yLabel)}</text>`);

  plot.series.forEach((series, index) => {
    const colour = COLOURS[index % COLOURS.length];
    const coordinates: string[] = [];
    for (let i = 0; i < series.x.length; i++) {
      if (usable(series.x[i], plot.xLog) && usable(series.y[i], plot.yLog)) coordinates.push(`${px(series.x[i]).toFixed(1)},${py(series.y[i]).toFixed(1)}`);
    }
    if (series.bars) {
      const base = py(plot.yLog ? yAxis.min : Math.max(0, yAxis.min)).toFixed(1);
      const path = coordinates.map((c) => `M${c.split(',')[0]},${base}V${c.split(',')[1]}`).join('');
      parts.push(`<path d="${path}" stroke="${colour}" stroke-width="1.2" fill="none"/>`);
    } else if (coordinates.length > 0) {
      parts.push(`<polyline points="${coordinates.join(' ')}" stroke="${colour}" stroke-width="1.6" fill="none"/>`);
    }
    const legendY = MARGIN.top + 14 + 16 * index;
    parts.push(`<line x1="${MARGIN.left + 10}" y1="${legendY}" x2="${MARGIN.left + 30}" y2="${legendY}" stroke="${colour}" stroke-width="2"/>`);
    parts.push(`<text x="${MARGIN.left + 36}" y="${legendY}" dominant-baseline="middle">${escapeXml(series.label)}</text>`);
  });
  if (plot.footnote) parts.push(`<text x="${MARGIN.left}" y="${HEIGHT - 14}" font-size="10" fill="#555555">${escapeXml(plot.footnote)}</text>`);
  parts.push('</svg>');
  return parts.join('\n') + '\n';
}

interface Axis {
  min: number;
  max: number;
  ticks: number[];
  fraction: (value: number) => number;
}

function usable(value: number, log: boolean): boolean {
  return Number.isFinite(value) && (!log || value > 0);
}

function axis(values: number[], log: boolean): Axis {
  let min = values.length ? Math.min(...values) : log ? 1 : 0;
  let max = values.length ? Math.max(...values) : log ? 10 : 1;
  if (log) {
    min = 10 ** Math.floor(Math.log10(min));
    max = 10 ** Math.ceil(Math.log10(max));
    if (max <= min) max = min * 10;
    const decades = Math.round(Math.log10(max / min));
    const step = Math.max(1, Math.ceil(decades / 10));
    const ticks: number[] = [];
    for (let e = Math.log10(min); e <= Math.log10(max) + 1e-9; e += step) ticks.push(10 ** e);
    return { min, max, ticks, fraction: (v) => (Math.log10(v) - Math.log10(min)) / (Math.log10(max) - Math.log10(min)) };
  }
  if (max <= min) max = min + 1;
  const step = niceStep((max - min) / 6);
  min = Math.floor(min / step) * step;
  max = Math.ceil(max / step) * step;
  const ticks: number[] = [];
  for (let v = min; v <= max + step / 2; v += step) ticks.push(Number(v.toPrecision(12)));
  return { min, max, ticks, fraction: (v) => (v - min) / (max - min) };
}

function niceStep(rough: number): number {
  const power = 10 ** Math.floor(Math.log10(rough));
  const scaled = rough / power;
  return (scaled <= 1 ? 1 : scaled <= 2 ? 2 : scaled <= 5 ? 5 : 10) * power;
}

function formatTick(value: number, log: boolean): string {
  if (log) return `1e${Math.round(Math.log10(value))}`;
  return Math.abs(value) >= 1e4 || (Math.abs(value) < 1e-3 && value !== 0) ? value.toExponential(1) : String(value);
}

function escapeXml(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}
