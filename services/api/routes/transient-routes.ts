import fastifyMultipart from '@fastify/multipart';
import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type, type TObject } from 'typebox';
import { Compile } from 'typebox/compile';
import { HeatpathError, isHeatpathError } from '../../../shared/errors/heatpath-error.js';
import { create as contentDisposition } from 'content-disposition';
import { sha256Hex } from '../../../shared/input/sha256-hex.js';
import type { TransientStore } from '../../store/transient-store.js';
import type { AnalysisQueue } from '../../../workers/analysis-queue.js';
import { JobStateSchema, JobStatusSchema, readJobStatus, storedJobStatus } from '../jobs/job-status.js';
import { UploadLinksSchema, UploadRecordSchema, withdrawalView } from '../schemas/upload-record-schema.js';
import { UploadMetadataSchema, UploadQuerySchema } from '../schemas/transient-metadata.js';
import { acceptTransientUpload, uploadLinks } from '../uploads/accept-transient-upload.js';
import { RESULT_CAUTION } from '../../../shared/analysis/result-caution.js';
import { typedFieldsFromText } from '../../../shared/schemas/typed-fields-from-text.js';
import { readMultipartUpload, readRawUpload } from '../uploads/read-upload-request.js';
import { withRequestCycleCount } from '../uploads/request-cycle-count.js';
import { storedUpload } from '../uploads/stored-upload.js';

const UploadAnswerSchema = Type.Object({
  upload_id: Type.String(),
  job_id: Type.String({ description: 'Same content, parameters, power, calibration and algorithm: same job.' }),
  input_sha256: Type.String(),
  state: JobStateSchema,
  quantity: Type.String(),
  channels: Type.Array(Type.String()),
  points: Type.Integer(),
  links: UploadLinksSchema,
  cycle_count: Type.Union([Type.Integer(), Type.Null()], { description: "The cycle count recorded for the upload: the request's cycle_count, else the file's \"# cycle_count:\" line, else null." }),
  warnings: Type.Array(Type.String(), { description: "What the upload was accepted despite, e.g. a request's cycle_count, power or kind that differs from the file's header lines." }),
  caution: Type.String({ default: RESULT_CAUTION }),
});

const binary = (description: string) => Type.Unsafe<unknown>({ format: 'binary', description });

/**
 * Uploads: the one write the benches do, day and night. The raw bytes and
 * the upload record are on disk before the 202 leaves.
 */
export const transientRoutes: FastifyPluginAsyncTypebox<{ store: TransientStore; queue: AnalysisQueue; maxUploadBytes: number }> = async (
  app,
  { store, queue, maxUploadBytes },
) => {
  // Raw bodies are Buffers, which JSON-Schema validators cannot type; TypeBox checks the query and headers here,
  // with numbers and lists read strictly from the query's text (typed-fields-from-text.ts) and the cycle count
  // as digits only (request-cycle-count.ts), whose own error fastify passes on as it is.
  app.setValidatorCompiler(({ schema, httpPart }) => {
    const validator = Compile(schema as TObject);
    return (value) => {
      let converted = value;
      try {
        if (httpPart === 'querystring') converted = typedFieldsFromText(schema as TObject, withRequestCycleCount(value as Record<string, unknown>, 'query parameter cycle_count'), 'query parameter');
      } catch (error) {
        if (isHeatpathError(error)) return { error };
        throw error;
      }
      return validator.Check(converted) ? { value: converted } : { error: validator.Errors(converted) };
    };
  });
  // The raw bytes are what is stored and hashed: no JSON parsing of the body here.
  app.removeContentTypeParser('application/json');
  app.addContentTypeParser(['text/csv', 'text/plain', 'application/json'], { parseAs: 'buffer', bodyLimit: maxUploadBytes }, (_request, body, done) =>
    done(null, body),
  );
  await app.register(fastifyMultipart, {
    limits: { fileSize: maxUploadBytes, files: 2, parts: 40, fields: 30, fieldSize: 64 * 1024, fieldNameSize: 100, headerPairs: 50 },
  });

  app.post(
    '/v1/transients',
    {
      config: { permission: 'upload' },
      schema: {
        tags: ['transients'],
        summary: 'Upload a measured transient',
        description:
          'Body: the transient as text/csv or application/json with metadata as query parameters, or multipart/form-data with a `file` part ' +
          'and metadata as fields or a `meta` JSON field (which may hold an inline `calibration`). The file is parsed before it is accepted. ' +
          'An Idempotency-Key header makes retries safe. 202 state `stored` means the upload is durably kept but the queue is unavailable; it is queued on recovery.',
        headers: Type.Object({ 'idempotency-key': Type.Optional(Type.String({ minLength: 1, maxLength: 200 })) }),
        querystring: Type.Partial(UploadQuerySchema),
        body: {
          content: {
            'text/csv': { schema: binary('The transient as CSV: time_s and value columns.') },
            'application/json': { schema: binary('The transient as JSON: {"time_s": [...], "temperature_C": [...]}.') },
            'multipart/form-data': {
              schema: Type.Unsafe<unknown>({
                description: 'A file part named `file`, plus metadata fields or a `meta` JSON field.',
                properties: {
                  file: { type: 'string', format: 'binary', description: 'The transient file (CSV or JSON).' },
                  // A JSON document inside a string field, as OpenAPI 3.1 describes it (JSON Schema contentMediaType and contentSchema).
                  meta: { type: 'string', contentMediaType: 'application/json', contentSchema: UploadMetadataSchema, description: 'Metadata as one JSON object.' },
                },
                required: ['file'],
              }),
            },
          },
        },
        response: { 202: UploadAnswerSchema },
      },
    },
    async (request, reply) => {
      const upload = request.isMultipart() ? await readMultipartUpload(request, request.query) : readRawUpload(request, request.query);
      const { answer, replayed } = await acceptTransientUpload({ store, queue, log: request.log }, upload, request.apiKey!, request.headers['idempotency-key']);
      if (replayed) reply.header('idempotent-replayed', 'true');
      return reply.status(202).header('location', answer.links.job).send(answer);
    },
  );

  app.get(
    '/v1/transients/:upload_id',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['transients'],
        summary: 'An upload, its metadata and its job',
        params: Type.Object({ upload_id: Type.String({ maxLength: 160 }) }),
        response: { 200: Type.Object({ upload: UploadRecordSchema, job: JobStatusSchema, links: UploadLinksSchema }) },
      },
    },
    async (request) => {
      const upload = await storedUpload(store, request.params.upload_id);
      // Unknown to the queue (or Redis away): the upload is still safely stored.
      const job = (await readJobStatus(store, queue, upload.job_id).catch(() => null)) ?? storedJobStatus(upload.job_id);
      return { upload: { ...upload, withdrawn: withdrawalView(await store.getWithdrawal(upload.upload_id)) }, job, links: uploadLinks(upload) };
    },
  );

  app.get(
    '/v1/transients/:upload_id/raw',
    {
      config: { permission: 'read' },
      schema: {
        tags: ['transients'],
        summary: 'The raw bytes of an upload, exactly as received',
        description:
          'For an audit that reproduces a result: the bytes the job analysed (a withdrawn upload\'s too), as text/csv or application/json by the upload\'s format, with the upload\'s file name in Content-Disposition ' +
          'and their SHA-256 (the upload\'s input_sha256, which job ids and provenance name) as the ETag and in Repr-Digest (RFC 9530). Bytes gone from the store, or no longer matching their SHA-256, are 410 STORED_INPUT_MISSING.',
        params: Type.Object({ upload_id: Type.String({ maxLength: 160 }) }),
        response: {
          200: {
            description: 'The bytes as received; the ETag is their SHA-256 in hex.',
            headers: {
              'content-disposition': Type.String({ description: 'attachment, with the upload\'s file name (RFC 6266).' }),
              etag: Type.String({ description: 'The bytes\' SHA-256 in hex, quoted: the upload\'s input_sha256.' }),
              'repr-digest': Type.String({ description: 'The same SHA-256 as RFC 9530 sets it out: sha-256=:base64:.' }),
            },
            content: { 'text/csv': { schema: binary('A CSV upload.') }, 'application/json': { schema: binary('A JSON upload.') } },
          },
        },
      },
    },
    async (request, reply) => {
      const upload = await storedUpload(store, request.params.upload_id);
      const bytes = await store.getBlob(upload.input_sha256);
      // A whole store that does not answer is an outage (503), not a lost file.
      if (bytes === null) await store.checkAnswers();
      if (bytes === null || sha256Hex(bytes) !== upload.input_sha256) {
        throw new HeatpathError(
          'STORED_INPUT_MISSING',
          `the raw transient of upload ${upload.upload_id} (${upload.file_name}, SHA-256 ${upload.input_sha256}) ${bytes === null ? 'is not in the store' : 'in the store no longer has that SHA-256: the file is damaged'}`,
        );
      }
      return reply
        .header('content-type', upload.format === 'json' ? 'application/json' : 'text/csv')
        .header('content-disposition', contentDisposition(upload.file_name))
        .header('etag', `"${upload.input_sha256}"`)
        .header('repr-digest', `sha-256=:${Buffer.from(upload.input_sha256, 'hex').toString('base64')}:`)
        .send(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength));
    },
  );
};
