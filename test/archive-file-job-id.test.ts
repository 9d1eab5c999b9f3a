import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { ALGORITHM_VERSION } from '../shared/analysis/algorithm-version.js';
import { archiveFileJobId, type ReprocessSettings } from '../services/cli/archive-file-job-id.js';
import { jobIdFor } from '../services/jobs/job-id.js';
import { SYNTHETIC_POWER_W, syntheticTransientCsv } from './support/synthetic-upload.js';

// The job id names what determines a result: content, sample, resolved parameters,
// power, calibration and algorithm version (services/jobs/job-id.ts).
const bytes = Buffer.concat([Buffer.from('# kind: cooling\n'), syntheticTransientCsv(91)]);
const sha256 = createHash('sha256').update(bytes).digest('hex');
const base: ReprocessSettings = { parameters: {}, power: { power_W: SYNTHETIC_POWER_W }, calibration_sha256: null, sampleIdOf: () => null };
const idOf = (settings: ReprocessSettings, content = bytes) =>
  archiveFileJobId(content, 'D1/t1.csv', 'D1/t1.csv', createHash('sha256').update(content).digest('hex'), settings).jobId;

describe('archiveFileJobId', () => {
  it('is the job id the service gives the same upload: parameters resolved against the file, running algorithm version', () => {
    const { jobId, parsed } = archiveFileJobId(bytes, 'D1/t1.csv', 'D1/t1.csv', sha256, base);
    expect(parsed?.quantity).toBe('temperature_C');
    expect(jobId).toBe(jobIdFor({ input_sha256: sha256, sample_id: null, parameters: { kind: 'cooling' }, power: { power_W: SYNTHETIC_POWER_W }, calibration_sha256: null }));
    expect(jobId).not.toBe(jobIdFor({ input_sha256: sha256, sample_id: null, parameters: { kind: 'cooling' }, power: { power_W: SYNTHETIC_POWER_W }, calibration_sha256: null, algorithm: `${ALGORITHM_VERSION}-earlier` }));
  });

  it('is the same for settings that resolve alike: an explicit default, the kind the header gives', () => {
    expect(idOf({ ...base, parameters: { method: 'posterior-mean', points_per_decade: 40 } })).toBe(idOf(base));
    expect(idOf({ ...base, parameters: { kind: 'cooling' } })).toBe(idOf(base));
  });

  it('changes with each setting that changes the result, and with the content', () => {
    const ids = [
      idOf(base),
      idOf({ ...base, parameters: { method: 'fourier' } }),
      idOf({ ...base, parameters: { points_per_decade: 20 } }),
      idOf({ ...base, parameters: { kind: 'heating' } }),
      idOf({ ...base, power: { power_W: 2 * SYNTHETIC_POWER_W } }),
      idOf({ ...base, calibration_sha256: 'a'.repeat(64) }),
      idOf(base, Buffer.concat([bytes, Buffer.from('# appended\n')])),
      idOf({ ...base, sampleIdOf: (path) => path.split('/')[0] }),
    ];
    expect(new Set(ids).size).toBe(ids.length);
  });

  it('names a file that cannot be parsed by the settings as given, so other settings try it again', () => {
    const empty = Buffer.from('time_s,temperature_C\n');
    const { jobId, parsed } = archiveFileJobId(empty, 'D1/empty.csv', 'D1/empty.csv', sha256, base);
    expect(parsed).toBeUndefined();
    expect(jobId).toMatch(/^job-[0-9a-f]{40}$/);
    expect(idOf({ ...base, parameters: { method: 'fourier' } }, empty)).not.toBe(idOf(base, empty));
  });
});
