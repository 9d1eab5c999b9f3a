/**
 * The parse the API keeps for the workers is derived data: when it cannot be
 * written (here `parsed` is a plain file, so no folder can be made there, as
 * on a full or read-only spot of the disk) the upload is still accepted and
 * analysed from its raw bytes. The contract is the README's ("derived ...
 * may be deleted at any time").
 */
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { AnalysisWorker } from '../workers/analysis-worker.js';
import { bearer, startApiTestApp, type ApiTestContext } from './support/api-test-app.js';
import { eventually } from './support/queue-test-fixture.js';
import { SYNTHETIC_POWER_W, syntheticTransientCsv } from './support/synthetic-upload.js';

let ctx: ApiTestContext;
let worker: AnalysisWorker | undefined;
beforeEach(async () => {
  ctx = await startApiTestApp();
});
afterEach(async () => {
  await worker?.close(5_000);
  await ctx.close();
});

describe('kept parse', () => {
  it('an upload whose parse cannot be kept is accepted and analysed from its raw bytes', async () => {
    await writeFile(join(ctx.config.dataDir, 'parsed'), 'not a folder');
    const answer = await ctx.app.inject({
      method: 'POST', url: `/v1/transients?sample_id=S-KEEP&power_W=${SYNTHETIC_POWER_W}`,
      headers: { ...bearer('bench'), 'content-type': 'text/csv' }, payload: syntheticTransientCsv(41),
    });
    expect(answer.statusCode).toBe(202);
    const { job_id: jobId, input_sha256: sha256 } = answer.json();
    expect(await ctx.store.getParsedTransient(sha256, 'csv')).toBeNull();
    worker = new AnalysisWorker({ dataDir: ctx.config.dataDir, redisUrl: ctx.redisUrl, prefix: ctx.prefix });
    await eventually(() => ctx.store.hasResult(jobId));
    expect(await ctx.store.getFailure(jobId)).toBeNull();
  });
});
