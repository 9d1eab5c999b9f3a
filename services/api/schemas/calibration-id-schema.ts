import { Type } from 'typebox';
import { CALIBRATION_ID_PATTERN } from '../../../shared/schemas/worded-patterns.js';

/** A stored calibration's id in a request (calibration-id.ts: SHA-256 hex of its canonical JSON). */
export function CalibrationIdSchema(description: string) {
  return Type.String({ pattern: CALIBRATION_ID_PATTERN.pattern, description });
}
