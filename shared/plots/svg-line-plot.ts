/**
 * A small, dependency-free SVG line plot with linear or logarithmic axes:
 * enough for Zth, spectra and structure functions to be looked at in a
 * browser or embedded in a report, without a plotting stack on the server.
 */
import { valueRange } from '../numerics/value-range.js';
import { pixelColumnDecimation } from './pixel-column-decimation.js';

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
const PLOT_WIDTH = WIDTH - MARGIN.left - MARGIN.right;
const PLOT_HEIGHT = HEIGHT - MARGIN.top - MARGIN.bottom;

/**
 * The most points drawn of one series: four per pixel column. A longer series
 * (a bench sampling every microsecond records 10^5..10^6 points) is drawn from
 * the first, last, lowest and highest point of each column, which looks the
 * same and keeps the SVG under 30 kB per series; the CSV tables keep every point.
 */
export const MAX_DRAWN_POINTS = 4 * (PLOT_WIDTH + 1);

export function svgLinePlot(plot: LinePlot): string {
  const shown = plot.series.map((series) => usablePoints(series, plot));
  const xAxis = axis(rangeOf(shown.map((points) => valueRange(points.x))), plot.xLog);
  const yAxis = axis(rangeOf(shown.map((points) => valueRange(points.y)).concat(plot.yLog ? [] : [[0, 0]])), plot.yLog);
  const px = (x: number) => MARGIN.left + PLOT_WIDTH * xAxis.fraction(x);
  const py = (y: number) => MARGIN.top + PLOT_HEIGHT * (1 - yAxis.fraction(y));

  const parts: string[] = [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${WIDTH}" height="${HEIGHT}" viewBox="0 0 ${WIDTH} ${HEIGHT}" font-family="sans-serif" font-size="12">`,
    `<rect width="${WIDTH}" height="${HEIGHT}" fill="#ffffff"/>`,
    `<text x="${WIDTH / 2}" y="22" text-anchor="middle" font-size="15">${escapeXml(plot.title)}</text>`,
  ];
  for (const tick of xAxis.ticks) {
    const x = px(tick).toFixed(1);
    parts.push(`<line x1="${x}" y1="${MARGIN.top}" x2="${x}" y2="${MARGIN.top + PLOT_HEIGHT}" stroke="#e4e4e4"/>`);
    parts.push(`<text x="${x}" y="${MARGIN.top + PLOT_HEIGHT + 16}" text-anchor="middle">${formatTick(tick, plot.xLog)}</text>`);
  }
  for (const tick of yAxis.ticks) {
    const y = py(tick).toFixed(1);
    parts.push(`<line x1="${MARGIN.left}" y1="${y}" x2="${MARGIN.left + PLOT_WIDTH}" y2="${y}" stroke="#e4e4e4"/>`);
    parts.push(`<text x="${MARGIN.left - 6}" y="${y}" text-anchor="end" dominant-baseline="middle">${formatTick(tick, plot.yLog)}</text>`);
  }
  parts.push(`<rect x="${MARGIN.left}" y="${MARGIN.top}" width="${PLOT_WIDTH}" height="${PLOT_HEIGHT}" fill="none" stroke="#555555"/>`);
  parts.push(`<text x="${MARGIN.left + PLOT_WIDTH / 2}" y="${HEIGHT - 44}" text-anchor="middle">${escapeXml(plot.xLabel)}</text>`);
  parts.push(`<text transform="translate(18 ${MARGIN.top + PLOT_HEIGHT / 2}) rotate(-90)" text-anchor="middle">${escapeXml(plot.yLabel)}</text>`);

  plot.series.forEach((series, index) => {
    const colour = COLOURS[index % COLOURS.length];
    const { x, y } = shown[index];
    const x_px = x.map(px);
    const y_px = y.map(py);
    const drawn = x.length > MAX_DRAWN_POINTS ? pixelColumnDecimation(x_px, y_px) : Array.from(x, (_, i) => i);
    const coordinates = drawn.map((i) => `${x_px[i].toFixed(1)},${y_px[i].toFixed(1)}`);
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

/** The points of a series its axes can show (finite, and positive on a log axis). */
function usablePoints(series: PlotSeries, plot: LinePlot): { x: Float64Array; y: Float64Array } {
  const length = Math.min(series.x.length, series.y.length);
  const x = new Float64Array(length);
  const y = new Float64Array(length);
  let count = 0;
  for (let i = 0; i < length; i++) {
    if (usable(series.x[i], plot.xLog) && usable(series.y[i], plot.yLog)) {
      x[count] = series.x[i];
      y[count] = series.y[i];
      count++;
    }
  }
  return { x: x.subarray(0, count), y: y.subarray(0, count) };
}

/** The range spanning the given ranges (one per series: a short list); [Infinity, -Infinity] for none. */
function rangeOf(ranges: [number, number][]): [number, number] {
  return [Math.min(...ranges.map(([min]) => min)), Math.max(...ranges.map(([, max]) => max))];
}

function axis([lowest, highest]: [number, number], log: boolean): Axis {
  const empty = !(lowest <= highest);
  let min = empty ? (log ? 1 : 0) : lowest;
  let max = empty ? (log ? 10 : 1) : highest;
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
