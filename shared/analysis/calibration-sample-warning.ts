import type { Calibration } from '../schemas/calibration.js';

/**
 * A TSP calibration holds for the device swept: devices of one type differ
 * by several mV at one temperature and in their sensitivity, so another
 * device's calibration shifts every junction temperature and scales Zth (a
 * 10 % different K-factor is 10 % off in Rth). Said when the transient's
 * sample (the upload's sample id, else the file's `# sample:` line) is not
 * the calibration's; nothing to say when either is unknown.
 *
 * A module's dies are swept one by one, each with its own calibration for its
 * channel: a sweep's `# sample: HB-9@HS` (the project's SAMPLE@POSITION, as in
 * `calibration_id@CH`) is a sweep of sample HB-9, at its position HS. One
 * written `HB-9 HS` is another sample's name, and the warning says how to
 * write it.
 */
export function calibrationSampleWarning(calibration: Calibration, transientSample: string | null | undefined): string[] {
  if (calibration.sample === undefined || !transientSample) return [];
  const swept = sweptSample(calibration.sample);
  if (swept === transientSample) return [];
  const position = calibration.sample.startsWith(`${transientSample} `) ? calibration.sample.slice(transientSample.length + 1).trim() : '';
  return [
    `the calibration was swept on sample ${calibration.sample}, the transient is of sample ${transientSample}: ${HOLDS_FOR_DEVICE_SWEPT}; analyse ${transientSample} with its own calibration` +
      (position !== '' && !/\s/.test(position)
        ? `. If ${position} is the position on ${transientSample} of the die swept, write the sweep's line as "# sample: ${transientSample}@${position}" and fit it again: SAMPLE@POSITION is a sweep of SAMPLE`
        : ''),
  ];
}

const HOLDS_FOR_DEVICE_SWEPT = 'a TSP calibration holds for the device swept (devices of one type differ in voltage and K-factor, which shifts every junction temperature and scales Zth and Rth)';

/** Samples named in a warning; the rest are counted. */
const SAMPLES_NAMED = 5;

/** The same for a reprocessing batch that applies one calibration to transients of several samples: those not the calibration's. */
export function calibrationSamplesWarning(calibration: Calibration, transientSamples: readonly string[]): string[] {
  if (calibration.sample === undefined) return [];
  const swept = sweptSample(calibration.sample);
  const others = [...new Set(transientSamples)].filter((sample) => sample !== swept);
  if (others.length === 0) return [];
  const named = others.slice(0, SAMPLES_NAMED).join(', ') + (others.length > SAMPLES_NAMED ? ` and ${others.length - SAMPLES_NAMED} more` : '');
  return [`the calibration was swept on sample ${calibration.sample}, the transients are of sample${others.length === 1 ? '' : 's'} ${named}: ${HOLDS_FOR_DEVICE_SWEPT}; reprocess each sample with its own calibration`];
}

/** The sample a sweep's `# sample:` line names: SAMPLE of SAMPLE@POSITION, else the whole line. */
function sweptSample(sample: string): string {
  const at = sample.lastIndexOf('@');
  return at > 0 && at < sample.length - 1 ? sample.slice(0, at) : sample;
}
