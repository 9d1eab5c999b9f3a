import type { Calibration } from '../schemas/calibration.js';

/**
 * A TSP calibration holds for the device swept: devices of one type differ
 * by several mV at one temperature and in their sensitivity, so another
 * device's calibration shifts every junction temperature and scales Zth (a
 * 10 % different K-factor is 10 % off in Rth). Said when the transient's
 * sample (the upload's sample id, else the file's `# sample:` line) is not
 * the calibration's; nothing to say when either is unknown.
 */
export function calibrationSampleWarning(calibration: Calibration, transientSample: string | null | undefined): string[] {
  if (calibration.sample === undefined || !transientSample || calibration.sample === transientSample) return [];
  return [
    `the calibration was swept on sample ${calibration.sample}, the transient is of sample ${transientSample}: a TSP calibration holds for the device swept ` +
      `(devices of one type differ in voltage and K-factor, which shifts every junction temperature and scales Zth and Rth); analyse ${transientSample} with its own calibration`,
  ];
}
