import { comparisonWarnings } from '../../shared/analysis/comparison-warnings.js';
import { differingSamplesWarning } from '../../shared/analysis/differing-samples-warning.js';
import { RESULT_CAUTION } from '../../shared/analysis/result-caution.js';
import { compareForDegradation, DEFAULT_RTH_RISE_LIMIT_PERCENT, degradationNotes, type DegradationCriteria } from '../../shared/analysis/package-degradation.js';
import { rthLimitCrossing } from '../../shared/analysis/rth-limit-crossing.js';
import { campaignOrder } from '../../shared/analysis/campaign-order.js';
import type { DegradationComparison } from '../../shared/schemas/degradation-comparison.js';
import { HeatpathError, isHeatpathError } from '../../shared/errors/heatpath-error.js';
import { cycleCountFromMeta } from '../../shared/input/cycle-count.js';
import { analysisInputsFromOptions, analysisOptions, analysisParametersUsage, powerAndCalibrationUsage } from './analysis-options.js';
import { choiceOption, numberOption, parseCommandLine } from './cli-arguments.js';
import { analyzeComparedFiles, type ComparedMeasurement } from './compared-measurements.js';
import { userErrorLine } from './user-error-line.js';

const degradationUsage = `heatpath degradation FILE FILE... [options]

Track package degradation over power cycling: each later transient of the
same device is compared with the reference by its cumulative structure
function. Reports Rth total and its change, where the structure function
starts to shift (R_sum from the junction and C_sum: the position of the
degraded layer) and the resistance that layer added. When every file has a
"# cycle_count:" line (digits only, e.g. 40000), the files are taken in cycle
order and the lowest count is the reference; otherwise the first file is the
reference and the others follow as given. The report says which it was.

${powerAndCalibrationUsage}
${analysisParametersUsage}
  --rth-rise-limit-percent L
                          flag an Rth rise above L % (default ${DEFAULT_RTH_RISE_LIMIT_PERCENT}, a common
                          end-of-life criterion (memory); the qualification plan and AQG 324 decide)
  --package-rth-k-per-w R the package's own Rth (junction to case), if known: a shift
                          that starts beyond R is flagged as lying in the thermal
                          interface or the cooler, not the package
  --format text|json      text table (default) or one JSON object with the shift curves`;

/** `heatpath degradation`: returns the exit code; writes the report to `print`. */
export async function runDegradationCommand(argv: string[], print: (text: string) => void): Promise<number> {
  const { values, positionals } = parseCommandLine('degradation', argv, {
    ...analysisOptions,
    'rth-rise-limit-percent': { type: 'string' },
    'package-rth-k-per-w': { type: 'string' },
    format: { type: 'string' },
    help: { type: 'boolean', short: 'h' },
  });
  if (values.help) {
    print(degradationUsage);
    return 0;
  }
  if (positionals.length < 2) throw new HeatpathError('CLI_USAGE', 'heatpath degradation needs at least two FILEs, a reference and a later one');
  const format = choiceOption('format', values.format as string | undefined, ['text', 'json'] as const) ?? 'text';
  const limitPercent = numberOption('rth-rise-limit-percent', values['rth-rise-limit-percent'] as string | undefined, { positive: true }) ?? DEFAULT_RTH_RISE_LIMIT_PERCENT;
  const packageRth_K_per_W = numberOption('package-rth-k-per-w', values['package-rth-k-per-w'] as string | undefined, { positive: true });
  const criteria: DegradationCriteria = { rthRiseLimitPercent: limitPercent, ...(packageRth_K_per_W !== undefined && { packageRth_K_per_W }) };
  const inputs = await analysisInputsFromOptions(values);

  const { measurements, failures } = await analyzeComparedFiles(positionals, inputs, new Date().toISOString());
  const counted: CountedMeasurement[] = [];
  for (const measurement of measurements) {
    try {
      counted.push({ measurement, cycleCount: cycleCountFromMeta(measurement.meta, measurement.file) });
    } catch (error) {
      if (!isHeatpathError(error)) throw error;
      failures.push(error);
    }
  }
  const { reference, later } = referenceAndLater(counted, positionals[0], failures);
  const rows = later.map((measurement) => degradationRow(reference, measurement, criteria));
  print(format === 'json' ? JSON.stringify(degradationReport(reference, rows, criteria)) : formatDegradation(reference, rows, criteria));
  for (const failure of failures) process.stderr.write(userErrorLine('degradation', failure) + '\n');
  return failures.length > 0 ? 2 : 0;
}

/** A measurement with the cycle count of its `# cycle_count:` line. */
interface CountedMeasurement {
  measurement: ComparedMeasurement;
  cycleCount: number | null;
}

/** How the reference was chosen: the campaign's own clock when every file tells it, else the user's order. */
export type ReferenceChoice = 'lowest_cycle_count' | 'first_argument';

export interface DegradationReference extends CountedMeasurement {
  chosenBy: ReferenceChoice;
}

export interface DegradationRow extends CountedMeasurement {
  comparison: DegradationComparison;
}

/**
 * The reference and the later files in campaign order (campaign-order.ts, the
 * service's rule for a sample's uploads too): in cycle order when every file
 * analysed has a cycle count; else as given, where nothing can be compared
 * without the first file. A file that failed is left out and
 * reported; with fewer than two left there is nothing to compare.
 */
function referenceAndLater(counted: CountedMeasurement[], firstFile: string, failures: HeatpathError[]): { reference: DegradationReference; later: CountedMeasurement[] } {
  if (counted.length < 2) throw failures.find((failure) => failure.location.file === firstFile) ?? failures[0];
  const { ordered: [first, ...later], byCycleCount } = campaignOrder(counted, ({ cycleCount }) => cycleCount);
  if (!byCycleCount && first.measurement.file !== firstFile) throw failures.find((failure) => failure.location.file === firstFile) ?? failures[0];
  return { reference: { ...first, chosenBy: byCycleCount ? 'lowest_cycle_count' : 'first_argument' }, later };
}

function degradationRow(reference: DegradationReference, { measurement, cycleCount }: CountedMeasurement, criteria: DegradationCriteria): DegradationRow {
  return { measurement, cycleCount, comparison: compareForDegradation(reference.measurement.result, measurement.result, criteria) };
}

function limitCrossing(referenceCycles: number | null, rows: DegradationRow[], limitPercent: number) {
  return rthLimitCrossing(referenceCycles, rows.map(({ cycleCount, comparison }) => ({ cycle_count: cycleCount, comparison })), limitPercent);
}

/** What the campaign's files give away together: files of different devices in one trend. */
function campaignWarnings(reference: DegradationReference, rows: DegradationRow[]): string[] {
  return differingSamplesWarning(
    [reference, ...rows].map(({ measurement }) => ({ label: measurement.file, result: measurement.result })),
    'a trend compares later measurements of one device with its reference, so a change between devices reads as degradation',
  );
}

/** The JSON object of `heatpath degradation --format json`. */
function degradationReport(referenceRow: DegradationReference, rows: DegradationRow[], criteria: DegradationCriteria) {
  const { measurement: reference, cycleCount, chosenBy } = referenceRow;
  return {
    heatpath_degradation: 1,
    reference: {
      file: reference.file,
      cycle_count: cycleCount,
      chosen_by: chosenBy,
      rth_total_K_per_W: reference.result.rth_total_K_per_W,
      warnings: comparisonWarnings(reference.result),
    },
    rth_rise_limit_percent: criteria.rthRiseLimitPercent,
    package_rth_K_per_W: criteria.packageRth_K_per_W ?? null,
    limit_crossing: limitCrossing(cycleCount, rows, criteria.rthRiseLimitPercent),
    later: rows.map(({ measurement, cycleCount, comparison }) => ({ file: measurement.file, cycle_count: cycleCount, ...comparison })),
    warnings: campaignWarnings(referenceRow, rows),
    notes: degradationNotes(criteria.packageRth_K_per_W),
    caution: RESULT_CAUTION,
  };
}

/** A place the shift may not start at: marked in the table, explained in the warnings. */
function uncertain(comparison: DegradationComparison): string {
  return comparison.shift_start?.well_placed === false ? '? ' : '';
}

/** The readable table of `heatpath degradation`: one row per later file. */
function formatDegradation(referenceRow: DegradationReference, rows: DegradationRow[], criteria: DegradationCriteria): string {
  const { measurement: reference, cycleCount: referenceCycles, chosenBy } = referenceRow;
  const limitPercent = criteria.rthRiseLimitPercent;
  const crossing = limitCrossing(referenceCycles, rows, limitPercent);
  const header = ['file', 'cycles', 'Rth total', 'change', 'u(change)', 'shift starts at R_sum', 'at C_sum', 'added R', 'detection limit', `rise > ${limitPercent} %`];
  const table = rows.map(({ measurement, cycleCount, comparison }) => [
    measurement.file,
    cycleCount === null ? '-' : String(cycleCount),
    `${comparison.rth_total_K_per_W.toPrecision(4)} K/W`,
    `${comparison.rth_change_percent >= 0 ? '+' : ''}${comparison.rth_change_percent.toFixed(1)} %`,
    `${comparison.rth_change_standard_uncertainty_percent.toPrecision(2)} %`,
    comparison.shift_start === null ? 'no shift' : `${uncertain(comparison)}${comparison.shift_start.r_sum_K_per_W.toPrecision(3)} K/W`,
    comparison.shift_start === null ? '-' : `${uncertain(comparison)}${comparison.shift_start.c_sum_J_per_K.toPrecision(3)} J/K`,
    comparison.added_r_K_per_W === null ? '-' : `${comparison.added_r_K_per_W.toPrecision(3)} K/W`,
    `${comparison.shift_threshold_K_per_W.toPrecision(2)} K/W`,
    comparison.rth_rise_exceeds_limit === null ? 'not judged' : comparison.rth_rise_exceeds_limit ? 'END OF LIFE?' : 'no',
  ]);
  const widths = header.map((h, column) => Math.max(h.length, ...table.map((row) => row[column].length)));
  const line = (cells: string[]) => '  ' + cells.map((cell, column) => (column === 0 ? cell.padEnd(widths[column]) : cell.padStart(widths[column]))).join('   ');
  // The campaign's first, then the reference's own: every comparison stands on them.
  const warnings = [
    ...campaignWarnings(referenceRow, rows).map((w) => `  ${w}`),
    ...comparisonWarnings(reference.result).map((w) => `  ${reference.file} (reference): ${w}`),
    ...rows.flatMap(({ measurement, comparison }) => comparison.warnings.map((w) => `  ${measurement.file}: ${w}`)),
  ];
  return [
    `Package degradation against ${reference.file}` +
      `${referenceCycles === null ? '' : ` (${referenceCycles} cycles)`}: Rth total ${reference.result.rth_total_K_per_W.toPrecision(4)} K/W`,
    chosenBy === 'lowest_cycle_count'
      ? '  reference: the lowest cycle count of the files analysed; the others follow in cycle order'
      : '  reference: the first file given, as not every file has a "# cycle_count:" line; the files follow in the order given',
    line(header),
    ...table.map(line),
    ...(rows.some(({ comparison }) => uncertain(comparison)) ? ['  ? the degraded layer is not well placed at this noise: see the warnings for where a step fits best.'] : []),
    ...(crossing === null
      ? []
      : [
          `  Rth rises above ${limitPercent} % first at ${crossing.first_cycle_count_above} cycles` +
            (crossing.interpolated_cycle_count === null ? '.' : `; between the measurements, at about ${Math.round(crossing.interpolated_cycle_count)} cycles.`),
        ]),
    '  u(change): standard uncertainty of the change from the noise of both records.',
    '  detection limit: a shift must persist above it to count; a layer that added less cannot be told from noise.',
    ...degradationNotes(criteria.packageRth_K_per_W).map((note) => `  ${note}`),
    ...(warnings.length > 0 ? ['Warnings:', ...warnings] : []),
    `Caution: ${RESULT_CAUTION}`,
  ].join('\n') + '\n';
}
