import type { AnalysisResult } from '../schemas/analysis-result.js';
import { svgLinePlot } from '../plots/svg-line-plot.js';
import { zthFromFoster } from '../numerics/foster-zth.js';

const FOOTNOTE = 'heatpath: engineering estimate; see the caution in result.json';

/** SVG plots of one result: Zth with its compact fit, the spectrum, the cumulative and differential structure functions. */
export function resultPlots(result: AnalysisResult): { name: string; svg: string }[] {
  const subject = `${result.source.file.replace(/^.*[\\/]/, '')} (${result.source.channel})`;
  const compactZth = zthFromFoster(
    Float64Array.from(result.compact.foster, (s) => s.r_K_per_W),
    Float64Array.from(result.compact.foster, (s) => s.tau_s),
    Float64Array.from(result.zth.time_s),
  );
  return [
    {
      name: 'zth.svg',
      svg: svgLinePlot({
        title: `Zth(t), ${subject}`, xLabel: 'time [s]', yLabel: 'Zth [K/W]', xLog: true, yLog: false, footnote: FOOTNOTE,
        series: [
          { label: 'Zth from the measurement', x: result.zth.time_s, y: result.zth.zth_K_per_W },
          { label: `compact ${result.compact.stages}-stage Foster fit`, x: result.zth.time_s, y: compactZth },
        ],
      }),
    },
    {
      name: 'spectrum.svg',
      svg: svgLinePlot({
        title: `Time-constant spectrum, ${subject}`, xLabel: 'time constant tau [s]', yLabel: 'R per bin [K/W]', xLog: true, yLog: false, footnote: FOOTNOTE,
        series: [{ label: `${result.provenance.method} deconvolution`, x: result.spectrum.tau_s, y: result.spectrum.r_K_per_W, bars: true }],
      }),
    },
    {
      name: 'structure-cumulative.svg',
      svg: svgLinePlot({
        title: `Cumulative structure function, ${subject}`, xLabel: 'R_sum from the junction [K/W]', yLabel: 'C_sum [J/K]', xLog: false, yLog: true, footnote: FOOTNOTE,
        series: [{ label: 'C_sum(R_sum)', x: result.structure.cumulative.r_K_per_W, y: result.structure.cumulative.c_J_per_K }],
      }),
    },
    {
      name: 'structure-differential.svg',
      svg: svgLinePlot({
        title: `Differential structure function, ${subject}`, xLabel: 'R_sum from the junction [K/W]', yLabel: 'K = dC_sum/dR_sum [W^2 s/K^2]', xLog: false, yLog: true, footnote: FOOTNOTE,
        series: [{ label: 'K(R_sum)', x: result.structure.differential.r_K_per_W, y: result.structure.differential.k_W2s_per_K2 }],
      }),
    },
  ];
}
