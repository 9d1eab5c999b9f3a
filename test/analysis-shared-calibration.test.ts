/**
 * A voltage file of several channels (several devices measured together) is
 * converted by the one calibration given: each channel's result says so.
 */
import { describe, expect, it } from 'vitest';
import { analyzeTransientFile } from '../shared/analysis/analyze-transient-file.js';
import { layeredStackTruth } from '../shared/models/layered-stack.js';
import { TO247_ON_HEATSINK_STACK } from '../shared/models/example-stacks.js';
import { syntheticTransient } from '../shared/models/synthetic-transient.js';
import { fitCalibration } from '../shared/numerics/tsp-calibration.js';
import { createRandom, gaussian } from '../shared/numerics/seeded-random.js';
import { channelCalibrationOption } from '../services/cli/analysis-options.js';
import { channelCalibrationFields } from '../services/api/schemas/transient-metadata.js';

const CREATED_AT = '2026-01-01T00:00:00.000Z';
const TSP = { voltage_at_reference_V: 0.62, sensitivity_V_per_K: -2.0e-3 }; // about -2 mV/K: common practice for a diode at low sense current
const truth = layeredStackTruth(TO247_ON_HEATSINK_STACK);
const power_W = 60 / truth.structure.r_K_per_W[truth.structure.r_K_per_W.length - 1];

function curve(seed: number, tsp: boolean) {
  const random = createRandom(seed);
  return syntheticTransient(truth.foster, {
    kind: 'cooling', power_W, reference_temperature_C: 25, first_s: 1e-6, last_s: 100, samples_per_decade: 50,
    noise_K: 0.02, artefact_s: 8e-6, artefact_K: 4, gaussian: () => gaussian(random), tsp: tsp ? TSP : undefined,
  });
}

function csv(quantity: string, channels: string[], tsp: boolean): Buffer {
  const curves = channels.map((_, i) => curve(21 + i, tsp));
  const header = channels.length === 1 ? quantity : channels.map((name) => `${quantity}@${name}`).join(',');
  const rows = Array.from(curves[0].time_s, (t, k) => [t, ...curves.map((c) => c.values[k])].join(','));
  return Buffer.from([`time_s,${header}`, ...rows].join('\n'));
}

const temperature_C = Float64Array.from({ length: 11 }, (_, i) => 25 + 12.5 * i);
const calibration = fitCalibration(temperature_C, temperature_C.map((t) => TSP.voltage_at_reference_V + TSP.sensitivity_V_per_K * (t - 25)), 'linear');
const sharedWarning = /one calibration converted all (\d+) voltage channels/;

describe('one calibration for several voltage channels', () => {
  it('warns in every channel\'s result, naming the channels and how to give each its own calibration in the caller\'s words', () => {
    const bytes = csv('voltage_V', ['D1', 'D2'], true);
    const results = analyzeTransientFile({ bytes, fileName: 'two-devices.csv', power: { power_W }, calibration, channelCalibrationWay: (channel) => `way of ${channel}` }, CREATED_AT);
    expect(results.map((r) => r.source.channel)).toEqual(['D1', 'D2']);
    for (const result of results) {
      const warning = result.quality.warnings.find((w) => sharedWarning.test(w));
      expect(warning).toMatch(/all 2 voltage channels of this file \(voltage_V@D1, voltage_V@D2\)/);
      expect(warning).toMatch(/give each channel its own, with way of D2\.$/);
    }
  });

  // Each surface names only its own way: a command-line user has no multipart meta, an upload no --calibration.
  it('names --calibration D2=CAL.json alone where the command line analyses, calibration_id@D2 alone where the service does', () => {
    const bytes = csv('voltage_V', ['D1', 'D2'], true);
    const warningWith = (channelCalibrationWay: (channel: string) => string) =>
      analyzeTransientFile({ bytes, fileName: 'two-devices.csv', power: { power_W }, calibration, channelCalibrationWay }, CREATED_AT)[0].quality.warnings.find((w) => sharedWarning.test(w));
    const commandLine = warningWith(channelCalibrationOption);
    expect(commandLine).toMatch(/give each channel its own, with --calibration D2=CAL\.json \(repeated per channel\)\.$/);
    expect(commandLine).not.toMatch(/calibration_id|multipart/);
    const upload = warningWith(channelCalibrationFields);
    expect(upload).toMatch(/give each channel its own, with calibration_id@D2=<id> \(or an inline calibration@D2 in the multipart meta\)\.$/);
    expect(upload).not.toMatch(/--calibration|CAL\.json/);
  });

  it('says nothing of it for one voltage channel or for temperature channels', () => {
    const [single] = analyzeTransientFile({ bytes: csv('voltage_V', ['D1'], true), fileName: 'one.csv', power: { power_W }, calibration }, CREATED_AT);
    expect(single.quality.warnings.some((w) => sharedWarning.test(w))).toBe(false);
    const temperatures = analyzeTransientFile({ bytes: csv('temperature_C', ['D1', 'D2'], false), fileName: 'temps.csv', power: { power_W } }, CREATED_AT);
    expect(temperatures.flatMap((r) => r.quality.warnings).some((w) => sharedWarning.test(w))).toBe(false);
  });
});
