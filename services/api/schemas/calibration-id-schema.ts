import { Type } from 'typebox';

/** A stored calibration's id in a request (calibration-id.ts: SHA-256 hex of its canonical JSON). */
export function CalibrationIdSchema(description: string) {
  return Type.String({ pattern: '^[0-9a-f]{64}$', description });
}
