import type { CalibrationPoints } from '../input/parse-calibration-points.js';
import { fitCalibration } from '../numerics/tsp-calibration.js';
import type { Calibration, CalibrationModel } from '../schemas/calibration.js';

/**
 * A sweep's calibration, as `heatpath calibrate` and POST /v1/calibrations
 * make it: the fit of its points, labelled with the device and the bench the
 * sweep names, so that an analysis can tell a transient of another device.
 */
export function calibrationFromSweep(points: CalibrationPoints, model: CalibrationModel): Calibration {
  const { warnings, ...fitted } = fitCalibration(points.temperature_C, points.voltage_V, model);
  return {
    ...fitted,
    ...(points.sample === undefined ? {} : { sample: points.sample }),
    ...(points.bench === undefined ? {} : { bench: points.bench }),
    ...(warnings === undefined ? {} : { warnings }),
  };
}
