import type { AnalysisResult } from '../schemas/analysis-result.js';
import { resultPlots } from './result-plots.js';

/** A file derived from a result: what the CLI writes with --out and the service serves as an artifact. */
export interface ResultArtifact {
  name: string;
  media_type: string;
  content: string;
}

const CSV = 'text/csv; charset=utf-8';
const SPICE = 'text/plain; charset=utf-8';
const SVG = 'image/svg+xml';

/**
 * The tables, netlists and plots of one result. Names are stable: scripts and the
 * LIMS fetch them by name. CSV columns carry their units in the header.
 */
export function resultArtifacts(result: AnalysisResult): ResultArtifact[] {
  const header = `# ${result.caution}\n# source: ${result.source.file} channel ${result.source.channel}; heatpath ${result.provenance.version}, ${result.provenance.algorithm}, method ${result.provenance.method}\n`;
  return [
    { name: 'zth.csv', media_type: CSV, content: header + csvColumns(['time_s', 'zth_K_per_W'], [result.zth.time_s, result.zth.zth_K_per_W]) },
    { name: 'spectrum.csv', media_type: CSV, content: header + csvColumns(['tau_s', 'r_K_per_W'], [result.spectrum.tau_s, result.spectrum.r_K_per_W]) },
    {
      name: 'foster.csv',
      media_type: CSV,
      content: header + csvRows(['r_K_per_W', 'c_J_per_K', 'tau_s'], result.foster.map((s) => [s.r_K_per_W, s.c_J_per_K, s.tau_s])),
    },
    {
      name: 'cauer.csv',
      media_type: CSV,
      content: header + csvRows(['r_K_per_W', 'c_J_per_K'], result.cauer.map((s) => [s.r_K_per_W, s.c_J_per_K])),
    },
    {
      name: 'structure-cumulative.csv',
      media_type: CSV,
      content: header + csvColumns(['r_sum_K_per_W', 'c_sum_J_per_K'], [result.structure.cumulative.r_K_per_W, result.structure.cumulative.c_J_per_K]),
    },
    {
      name: 'structure-differential.csv',
      media_type: CSV,
      content: header + csvColumns(['r_sum_K_per_W', 'k_W2s_per_K2'], [result.structure.differential.r_K_per_W, result.structure.differential.k_W2s_per_K2]),
    },
    {
      name: 'compact-foster.csv',
      media_type: CSV,
      content: header + csvRows(['r_K_per_W', 'c_J_per_K', 'tau_s'], result.compact.foster.map((s) => [s.r_K_per_W, s.c_J_per_K, s.tau_s])),
    },
    { name: 'compact-foster.cir', media_type: SPICE, content: result.compact.spice.foster },
    { name: 'compact-cauer.cir', media_type: SPICE, content: result.compact.spice.cauer },
    ...resultPlots(result).map((plot) => ({ name: plot.name, media_type: SVG, content: plot.svg })),
  ];
}

function csvColumns(names: string[], columns: ArrayLike<number>[]): string {
  const rows: number[][] = [];
  const length = Math.min(...columns.map((c) => c.length));
  for (let i = 0; i < length; i++) rows.push(columns.map((c) => c[i]));
  return csvRows(names, rows);
}

function csvRows(names: string[], rows: number[][]): string {
  const lines = [names.join(',')];
  for (const row of rows) lines.push(row.map(formatNumber).join(','));
  return lines.join('\n') + '\n';
}

/**
 * Ten significant digits (far beyond any measurement, short enough to read),
 * written as JavaScript writes the rounded number: its shortest exact form,
 * without trailing zeros in the fraction and with the exponent whole.
 */
export function formatNumber(value: number): string {
  return String(Number(value.toPrecision(10)));
}
