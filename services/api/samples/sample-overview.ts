import { Type, type Static } from 'typebox';
import type { UploadSummary } from '../../store/upload-summary-index.js';

export const SampleOverviewSchema = Type.Object({
  sample_id: Type.String(),
  uploads: Type.Integer({ description: 'Uploads stored under the sample id (of the bench or tag asked for), withdrawn ones included.' }),
  withdrawn: Type.Integer({ description: 'Of those, the uploads withdrawn (POST /v1/transients/{upload_id}/withdraw).' }),
  first_received_at: Type.String({ description: 'When the first of those uploads arrived.' }),
  last_received_at: Type.String({ description: 'When the last of those uploads arrived.' }),
  latest_cycle_count: Type.Union([Type.Integer(), Type.Null()], {
    description:
      "The highest cycle count among the uploads the degradation trend counts (not withdrawn; of bytes sent more than once, the latest upload, whose cycle count corrects the earlier ones'); null when none has one.",
  }),
  links: Type.Object({ results: Type.String(), degradation: Type.String() }),
});

export type SampleOverview = Static<typeof SampleOverviewSchema>;

/**
 * One entry per sample id of the given upload summaries (oldest first, as the store lists them), in the order of the
 * sample ids' code units, so that a page's last id is a stable place to go on from. Costs no record reads: what it
 * needs is in the summaries.
 */
export function sampleOverviews(summaries: readonly UploadSummary[], withdrawn: ReadonlySet<string>): SampleOverview[] {
  const bySample = new Map<string, UploadSummary[]>();
  for (const summary of summaries) {
    const uploads = bySample.get(summary.sample_id);
    if (uploads === undefined) bySample.set(summary.sample_id, [summary]);
    else uploads.push(summary);
  }
  return [...bySample.keys()].sort(byCodeUnits).map((sampleId) => {
    const uploads = bySample.get(sampleId)!;
    const counted = new Map<string, UploadSummary>();
    for (const upload of uploads) if (!withdrawn.has(upload.upload_id)) counted.set(upload.input_sha256, upload);
    let latestCycleCount: number | null = null;
    for (const { cycle_count } of counted.values()) if (cycle_count !== null && (latestCycleCount === null || cycle_count > latestCycleCount)) latestCycleCount = cycle_count;
    const path = `/v1/samples/${encodeURIComponent(sampleId)}`;
    return {
      sample_id: sampleId,
      uploads: uploads.length,
      withdrawn: uploads.filter((upload) => withdrawn.has(upload.upload_id)).length,
      first_received_at: uploads[0].received_at,
      last_received_at: uploads[uploads.length - 1].received_at,
      latest_cycle_count: latestCycleCount,
      links: { results: `${path}/results`, degradation: `${path}/degradation` },
    };
  });
}

function byCodeUnits(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}
