import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { NOT_BLANK_PATTERN } from '../../../shared/schemas/worded-patterns.js';
import type { TransientStore } from '../../store/transient-store.js';
import { UploadLinksSchema, WithdrawalSchema, withdrawalView } from '../schemas/upload-record-schema.js';
import { uploadLinks } from '../uploads/accept-transient-upload.js';
import { storedUpload } from '../uploads/stored-upload.js';

const WithdrawAnswerSchema = Type.Object({
  upload_id: Type.String(),
  sample_id: Type.String(),
  withdrawn: WithdrawalSchema,
  note: Type.String({ description: 'What the withdrawal did, and did not do, in words.' }),
  links: Type.Object({
    ...UploadLinksSchema.properties,
    raw: Type.String({ description: 'The raw bytes as received: kept.' }),
    sample: Type.String({ description: "The sample's listing, where the upload stays, marked withdrawn." }),
  }),
});

/**
 * Taking back an upload that should not count: one sent under the wrong sample id, or a failed measurement. Nothing
 * is deleted (the bytes, the record and any result stay for audit): a withdrawal record is written beside the upload.
 */
export const withdrawalRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore }> = async (app, { store }) => {
  app.post(
    '/v1/transients/:upload_id/withdraw',
    {
      config: { permission: 'admin' },
      schema: {
        tags: ['transients'],
        summary: 'Withdraw an upload (wrong sample id, failed measurement), keeping it for audit',
        description:
          "Records who withdrew the upload, when and why; deletes nothing. A withdrawn upload stays in its sample's listing, marked withdrawn, and in GET /v1/transients/{upload_id}; its sample's degradation trend leaves it out " +
          "(not_included, reason_code withdrawn), unless the same bytes stand as another upload of the sample, through which the measurement still counts (the note then names them: withdraw them too if the measurement is to go); the recovery sweep does not queue it again and new batches do not select it. A file sent under the wrong sample id is withdrawn and then uploaded again under the right one. " +
          'Withdrawing an upload again is 409 UPLOAD_ALREADY_WITHDRAWN, naming the first withdrawal, which stands.',
        params: Type.Object({ upload_id: Type.String({ maxLength: 160 }) }),
        body: Type.Object(
          { reason: Type.String({ maxLength: 2000, pattern: NOT_BLANK_PATTERN.pattern, description: 'Why it is withdrawn, kept with the withdrawal (e.g. "sent as M07, is M08").' }) },
          { additionalProperties: false, examples: [{ reason: 'sent under M07, measured on M08' }] },
        ),
        response: { 200: WithdrawAnswerSchema },
      },
    },
    async (request) => {
      const { upload_id } = request.params;
      const upload = await storedUpload(store, upload_id);
      const { wrote, withdrawal } = await store.putWithdrawal({ upload_id, at: new Date().toISOString(), by: request.apiKey!.name, reason: request.body.reason.trim() });
      if (!wrote) {
        throw new HeatpathError('UPLOAD_ALREADY_WITHDRAWN', `upload ${upload_id} was withdrawn at ${withdrawal.at} by ${withdrawal.by}, because: ${withdrawal.reason}`);
      }
      const finished = (await store.hasResult(upload.job_id)) || (await store.hasFailure(upload.job_id));
      const sample = `/v1/samples/${encodeURIComponent(upload.sample_id)}`;
      // Bytes sent more than once are one measurement, counted through their latest upload that stands.
      const [sameBytes, withdrawals] = await Promise.all([store.listUploadSummaries({ sample_id: upload.sample_id, input_sha256: upload.input_sha256 }), store.withdrawals()]);
      const standing = sameBytes.filter((other) => !withdrawals.has(other.upload_id));
      const them = standing.length > 1 ? 'them' : 'it';
      const trend =
        standing.length === 0
          ? `The sample's degradation trend leaves it out (not_included, reason_code withdrawn). `
          : `Its bytes were uploaded for this sample as ${standing.map((other) => `upload ${other.upload_id} (received ${other.received_at}, ${other.cycle_count ?? 'unknown'} cycles)`).join(', ')} too, not withdrawn: ` +
            `the measurement still counts in the degradation trend through ${them} (bytes sent again count once, as their latest upload); withdraw ${them} too if the measurement itself is to go. `;
      const jobNote = standing.length === 0 ? 'its result is kept but not counted' : 'its result is kept';
      return {
        upload_id,
        sample_id: upload.sample_id,
        withdrawn: withdrawalView(withdrawal)!,
        note:
          `Upload ${upload_id} (${upload.file_name}) of sample ${upload.sample_id} is withdrawn. Nothing was deleted: its raw bytes, its record and its job's result stay, and the sample's listing shows it withdrawn. ` +
          trend +
          'The recovery sweep does not queue it again and new batches do not select it. ' +
          (finished ? '' : `Its job ${upload.job_id} has no outcome yet: if it is queued it still runs, and ${jobNote}. `) +
          'If the file belongs to another sample, upload it again with that sample_id.',
        links: { ...uploadLinks(upload), raw: `/v1/transients/${upload_id}/raw`, sample: `${sample}/results` },
      };
    },
  );
};
