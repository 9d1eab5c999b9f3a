import { sha256Hex } from '../input/sha256-hex.js';
import { HeatpathError } from '../errors/heatpath-error.js';
import { parseTransient } from '../input/parse-transient.js';
import type { TransientFile } from '../input/transient-file.js';
import { estimateNoiseRms } from '../numerics/noise-estimate.js';
import { kelvinTemperatureWarning } from '../numerics/kelvin-temperature-warning.js';
import { KELVIN_SPARES_ZTH } from './kelvin-column-warning.js';
import { calibrationExtrapolationWarnings, voltageToTemperature } from '../numerics/tsp-calibration.js';
import { largeResidualWarning } from '../numerics/tsp-calibration-warnings.js';
import { heatingPower_W, zthFromTemperature, zthFromZthInput, type ZthCurve } from '../numerics/zth-from-temperature.js';
import { steadyStateRth } from '../numerics/steady-state.js';
import { timeConstantSpectrum } from '../numerics/time-constant-spectrum.js';
import { fosterToCauer } from '../numerics/foster-to-cauer.js';
import { mergeNegligibleCauerTail } from '../numerics/cauer-negligible-tail.js';
import { cumulativeStructureFunction, differentialStructureFunction } from '../numerics/structure-function.js';
import { cutAtSink } from '../numerics/structure-function-sink.js';
import { fosterFromSpectrum } from '../numerics/foster-from-spectrum.js';
import { COMPACT_VALID_TOLERANCE_REL, fitCompactModel } from './fit-compact-model.js';
import { formatTime } from './format-time.js';
import { fosterNetlist, cauerNetlist } from '../numerics/spice-netlist.js';
import type { CauerLadder, FosterNetwork } from '../numerics/rc-network.js';
import type { CompactModelValidity } from '../numerics/compact-model-validity.js';
import type { AnalysisParameters, Power } from '../schemas/analysis-parameters.js';
import type { AnalysisResult } from '../schemas/analysis-result.js';
import type { Calibration } from '../schemas/calibration.js';
import { ALGORITHM_VERSION, HEATPATH_VERSION } from './algorithm-version.js';
import { RESULT_CAUTION } from './result-caution.js';
import { channelPowerLines, resolveAnalysisInputs } from './resolve-analysis-inputs.js';
import { calibrationIdOf } from '../schemas/calibration-id.js';
import { headerSample } from '../input/header-label.js';
import { calibrationSampleWarning } from './calibration-sample-warning.js';
import { channelCalibrations, sharedCalibrationWarnings, unusedCalibrationWarnings } from './channel-calibrations.js';

/** One transient file to analyse, as the CLI and the workers hand it over. */
export interface TransientFileInput {
  /** The raw bytes as received; hashed for provenance. */
  bytes: Uint8Array;
  /** These bytes as parseTransient read them, where a caller already has that (the service parses each upload once); omitted: parsed here. */
  parsed?: TransientFile;
  /** Name used in error messages and in result.source.file. */
  fileName: string;
  /** Omitted: detected from the content (transientFormatOf in parse-transient.ts). */
  format?: 'csv' | 'json';
  /** Heating power; omitted: from the file's power_W or current_A and voltage_V metadata. Not used for zth_K_per_W input (a given or file one gets a warning, so that the CLI and the service, which resolves the file's power on upload, agree). */
  power?: Power;
  /** Needed for voltage_V input, for every channel without its own in `channelCalibrations`; not used for any other input (a given one gets a warning). */
  calibration?: Calibration;
  /** Channels' own calibrations by channel name (a module's dies each have their own TSP); a name the file does not have is an error. */
  channelCalibrations?: ReadonlyMap<string, Calibration>;
  /** The device measured, checked against the calibration's: the service's sample id; omitted: the file's `# sample:` line. */
  sample?: string;
  /** Omitted fields: the file's `kind` metadata, then the schema defaults. */
  parameters?: Partial<AnalysisParameters>;
  /**
   * How the caller's users give channel CH its own calibration (`--calibration CH=CAL.json` on the command line,
   * `calibration_id@CH` for an upload), for the warning that one calibration converted several channels; each
   * surface names only its own. Omitted: the warning says that each channel needs its own, not how.
   */
  channelCalibrationWay?: (channel: string) => string;
}

/**
 * Analyse every channel of one transient file. Pure apart from hashing: the
 * caller passes `createdAt` for provenance. Throws HeatpathError for input the
 * user must fix.
 */
export function analyzeTransientFile(input: TransientFileInput, createdAt: string): AnalysisResult[] {
  const file = input.parsed ?? parseTransient(input.bytes, input.fileName, input.format);
  const { parameters, power, channelPowers, warnings: headerWarnings, channelWarnings } = resolveAnalysisInputs(file, { parameters: input.parameters, power: input.power }, input.fileName);
  // Zth input needs neither power nor calibration, temperature input no calibration: what is given and
  // not used is neither recorded as used nor silently dropped.
  const calibrations = channelCalibrations(file, input, input.fileName);
  const resolvedPower_W = power ? heatingPower_W(power) : null;
  const power_W = file.quantity === 'zth_K_per_W' ? null : resolvedPower_W;
  const inputWarnings = [
    ...headerWarnings,
    ...sharedCalibrationWarnings(file, input.channelCalibrations, input.channelCalibrationWay),
    // A file with channels' own power lines either uses them or, given one power over them, is already warned of with those lines.
    ...(channelPowerLines(file).length > 0 ? [] : sharedPowerWarning(file, power_W)),
    ...unusedCalibrationWarnings(file, input, calibrations),
    ...(resolvedPower_W !== null && power_W === null ? [`power not used: the input is zth_K_per_W, which needs none; the heating power of ${resolvedPower_W} W was ignored`] : []),
  ];
  const provenance = {
    version: HEATPATH_VERSION,
    algorithm: ALGORITHM_VERSION,
    method: parameters.method,
    parameters,
    input_sha256: sha256Hex(input.bytes),
    calibration: null,
    calibration_sha256: null,
    created_at: createdAt,
  };
  const sample = input.sample ?? headerSample(file.meta);
  return eachChannel(file, { power_W, channelPowers }, input.fileName, (channel, channelPower_W) => {
    // Each channel's result names the calibration that converted it.
    const calibration = calibrations?.get(channel.name);
    const named = calibration ? calibrationNamed(calibration) : null;
    const channelProvenance = { ...provenance, calibration: named, calibration_sha256: named?.id ?? null };
    const warnings = [
      ...inputWarnings,
      ...(calibration ? [...calibrationSampleWarning(calibration, sample), ...largeResidualWarning(calibration, '').map((warning) => `calibration: ${warning}`)] : []),
      ...(channelWarnings.get(channel.name) ?? []),
    ];
    return analyzeChannel(file, channel.values, channel.name, parameters, channelPower_W, calibration, channelProvenance, input.fileName, warnings);
  });
}

/** What a result says of the calibration that converted its channel: what its id covers, without the coefficients. */
function calibrationNamed(calibration: Calibration): NonNullable<AnalysisResult['provenance']['calibration']> {
  return {
    id: calibrationIdOf(calibration),
    model: calibration.model,
    residual_rms_K: calibration.residual_rms_K,
    voltage_range_V: calibration.voltage_range_V,
    temperature_range_C: calibration.temperature_range_C,
    points: calibration.points,
    sample: calibration.sample ?? null,
  };
}

/**
 * `work` on each channel with its heating power (its own `# power_W@CHANNEL:` line's, else the file's; null for
 * Zth input), an error it throws located at the channel's column. The analysis and the upload's check
 * (check-zth-rises.ts) go through it alike, so that both use one power and name one place.
 */
export function eachChannel<T>(
  file: TransientFile,
  powers: { power_W: number | null; channelPowers: Map<string, Power> | undefined },
  fileName: string,
  work: (channel: TransientFile['channels'][number], power_W: number | null) => T,
): T[] {
  return file.channels.map((channel) => {
    try {
      const channelPower = powers.channelPowers?.get(channel.name);
      return work(channel, channelPower ? heatingPower_W(channelPower) : powers.power_W);
    } catch (error) {
      if (error instanceof HeatpathError && error.location.file === undefined) {
        throw error.at({ ...channelLocation(file, channel.name, fileName), ...error.location });
      }
      throw error;
    }
  });
}

/**
 * A channel's Zth as the analysis constructs it: its values converted to temperature (voltage input, by the
 * calibration), their noise, and the sqrt(t)-corrected Zth, which throws ANALYSIS_NOT_ANALYSABLE for a curve of
 * the other kind than stated. The upload checks a curve with it before accepting it (check-zth-rises.ts).
 */
export function channelZth(
  file: TransientFile,
  values: Float64Array,
  parameters: AnalysisParameters,
  power_W: number | null,
  calibration: Calibration | undefined,
): { zth: ZthCurve; temperature_C: Float64Array | null; noise_K: number | null; noise_K_per_W: number } {
  const time_s = file.time_s;
  const window = { early_time_start_s: parameters.early_time_start_s, early_time_end_s: parameters.early_time_end_s };
  if (file.quantity === 'zth_K_per_W') {
    const noise_K_per_W = estimateNoiseRms(values);
    return { zth: zthFromZthInput(time_s, values, { noise_rms: noise_K_per_W, ...window }), temperature_C: null, noise_K: null, noise_K_per_W };
  }
  const temperature_C = file.quantity === 'voltage_V' ? voltageToTemperature(calibration!, time_s, values) : values;
  const noise_K = estimateNoiseRms(temperature_C);
  const zth = zthFromTemperature(time_s, temperature_C, { power_W: power_W! }, { kind: parameters.kind, noise_rms: noise_K, ...window });
  return { zth, temperature_C, noise_K, noise_K_per_W: noise_K / power_W! };
}

/** Where a channel's own error lies: its column (`voltage_V@M21`, or the quantity for a file of one channel). */
export function channelLocation(file: TransientFile, channelName: string, fileName: string): { file: string; column: string } {
  return { file: fileName, column: file.channels.length > 1 ? `${file.quantity}@${channelName}` : file.quantity };
}

/**
 * A file carries one heating power for all its channels, but devices in
 * series at the same current dissipate different powers: each result says
 * which power it was analysed with and how to give each device its own.
 */
function sharedPowerWarning(file: TransientFile, power_W: number | null): string[] {
  if (power_W === null || file.channels.length < 2) return [];
  const names = file.channels.map((channel) => `${file.quantity}@${channel.name}`).join(', ');
  return [
    `every channel of this file (${names}) was analysed with the same heating power of ${power_W} W: ` +
      `if the devices dissipated different powers (for example in series at the same current), their Zth is wrong; give each channel its power in the file (a "# power_W@${file.channels[0].name}: ..." line per channel), or split the file into one file per channel.`,
  ];
}

/** Junction temperatures that a calibration whose sweep was written in kelvin gives (kelvin-temperature-warning.ts). */
function calibratedTemperatureUnitWarning(temperature_C: Float64Array): string[] {
  return kelvinTemperatureWarning(
    temperature_C,
    'the junction temperatures the calibration gives',
    `if the calibration sweep's temperature_C was in kelvin, subtract 273.15 from it and fit the calibration again (temperature_C is in degrees Celsius); ${KELVIN_SPARES_ZTH}`,
  );
}

function analyzeChannel(
  file: TransientFile,
  values: Float64Array,
  channelName: string,
  parameters: AnalysisParameters,
  power_W: number | null,
  calibration: Calibration | undefined,
  provenance: AnalysisResult['provenance'],
  fileName: string,
  inputWarnings: string[],
): AnalysisResult {
  const time_s = file.time_s;
  const warnings: string[] = [...inputWarnings];
  const { zth, temperature_C, noise_K, noise_K_per_W } = channelZth(file, values, parameters, power_W, calibration);
  if (file.quantity === 'voltage_V') warnings.push(...calibrationExtrapolationWarnings(calibration!, values, estimateNoiseRms(values), zth.early_time.window_start_index), ...calibratedTemperatureUnitWarning(temperature_C!));
  warnings.push(...zth.early_time.warnings);

  const steady = steadyStateRth(time_s, zth.zth_K_per_W, noise_K_per_W);
  warnings.push(...steady.warnings);

  const spectrum = timeConstantSpectrum(time_s, zth.zth_K_per_W, {
    method: parameters.method,
    pointsPerDecade: parameters.points_per_decade,
    noise_K_per_W,
  });
  warnings.push(...spectrum.warnings);

  const foster = fosterFromSpectrum(spectrum.tau_s, spectrum.r_K_per_W);
  const cauer = mergeNegligibleCauerTail(fosterToCauer(foster));
  const cumulative = cutAtSink(cumulativeStructureFunction(cauer));
  const differential = differentialStructureFunction(cumulative);

  const compact = fitCompactModel(time_s, zth.zth_K_per_W, parameters.compact_stages, steady, noise_K_per_W);
  warnings.push(...compact.warnings);
  const compactCauer = fosterToCauer(compact.foster);
  const subcircuit = `${fileName.replace(/^.*[\\/]/, '').replace(/\.[^.]*$/, '')}_${channelName}`;
  const validityComments = compactValidityComments(compact.validity);
  const rth = steady.rth_K_per_W;

  return {
    heatpath_result: 1,
    source: { file: fileName, channel: channelName, quantity: file.quantity, points: time_s.length, meta: file.meta },
    rth_total_K_per_W: rth,
    power_W,
    zth: { time_s: Array.from(time_s), zth_K_per_W: Array.from(zth.zth_K_per_W) },
    spectrum: { tau_s: Array.from(spectrum.tau_s), r_K_per_W: Array.from(spectrum.r_K_per_W) },
    foster: fosterStages(foster),
    cauer: cauerStages(cauer),
    structure: {
      cumulative: { r_K_per_W: Array.from(cumulative.r_K_per_W), c_J_per_K: Array.from(cumulative.c_J_per_K) },
      differential: { r_K_per_W: Array.from(differential.r_K_per_W), k_W2s_per_K2: Array.from(differential.k_W2s_per_K2) },
    },
    compact: {
      stages: compact.foster.r_K_per_W.length,
      foster: fosterStages(compact.foster),
      cauer: cauerStages(compactCauer),
      fit_rms_K_per_W: compact.rms_K_per_W,
      fit_max_rel: compact.max_abs_K_per_W / rth,
      valid_tolerance_rel: COMPACT_VALID_TOLERANCE_REL,
      valid_from_s: compact.validity.valid_from_s,
      max_rel_error_by_decade: compact.validity.by_decade,
      spice: {
        foster: fosterNetlist(compact.foster, { name: `${subcircuit}_foster`, comments: validityComments }),
        cauer: cauerNetlist(compactCauer, { name: `${subcircuit}_cauer`, comments: validityComments }),
      },
    },
    early_time: {
      applied: zth.early_time.applied,
      window_start_s: zth.early_time.window_start_s,
      window_end_s: zth.early_time.window_end_s,
      automatic: zth.early_time.automatic,
      slope_per_sqrt_s: zth.early_time.slope_per_sqrt_s,
      t0_value: zth.early_time.t0_value,
      t0_standard_error: zth.early_time.t0_standard_error,
      residual_rms: zth.early_time.residual_rms,
    },
    quality: {
      noise_K,
      noise_K_per_W,
      deconvolution_iterations: spectrum.iterations,
      deconvolution_residual_rms: spectrum.residual_rms_K_per_W,
      warnings,
    },
    provenance,
    caution: RESULT_CAUTION,
  };
}

/** The netlists' header lines saying from when the model follows the measured Zth, and how far off it is before. */
function compactValidityComments(validity: CompactModelValidity): string[] {
  const tolerance = `${100 * COMPACT_VALID_TOLERANCE_REL} %`;
  const byDecade = validity.by_decade.map((decade) => `${formatTime(decade.from_s)} ${(100 * decade.max_rel_error).toPrecision(2)} %`).join(', ');
  return [
    validity.valid_from_s === null
      ? `Valid: nowhere; more than ${tolerance} off the measured Zth at the record's end`
      : `Valid from ${formatTime(validity.valid_from_s)}: within ${tolerance} of the measured Zth from then on; shorter pulses are off by more`,
    `Largest |model - Zth| / Zth in the decade from ${byDecade}`,
  ];
}

function fosterStages(foster: FosterNetwork): AnalysisResult['foster'] {
  return Array.from(foster.r_K_per_W, (r, i) => ({ r_K_per_W: r, c_J_per_K: foster.tau_s[i] / r, tau_s: foster.tau_s[i] }));
}

function cauerStages(cauer: CauerLadder): AnalysisResult['cauer'] {
  return Array.from(cauer.r_K_per_W, (r, i) => ({ r_K_per_W: r, c_J_per_K: cauer.c_J_per_K[i] }));
}
