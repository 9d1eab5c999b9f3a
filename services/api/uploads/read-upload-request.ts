import type {} from '@fastify/multipart';
import type { FastifyRequest } from 'fastify';
import { Compile } from 'typebox/compile';
import { HeatpathError, isHeatpathError } from '../../../shared/errors/heatpath-error.js';
import type { TransientFormat } from '../../../shared/input/parse-transient.js';
import { UploadMetadataSchema, UploadQuerySchema, type UploadMetadata, type UploadQuery } from '../schemas/transient-metadata.js';
import { typedFieldsFromText } from '../../../shared/schemas/typed-fields-from-text.js';
import { withRequestCycleCount } from './request-cycle-count.js';

/** An upload as received, before anything is checked but its metadata. */
export interface UploadRequest {
  bytes: Buffer;
  /** The name results and netlists carry (stored as the upload's file_name). */
  fileName: string;
  /** The name errors give the upload: fileName, unless that was made up for a raw body, which is then called what it is. */
  sourceName: string;
  /** From the media type or file name; undefined lets the parser decide. */
  format: TransientFormat | undefined;
  metadata: UploadMetadata;
}

const rawFormats: Record<string, TransientFormat> = { 'text/csv': 'csv', 'text/plain': 'csv', 'application/json': 'json' };

/** Raw body: the transient is the body, metadata are query parameters. */
export function readRawUpload(request: FastifyRequest, query: Partial<UploadQuery>): UploadRequest {
  const format = rawFormats[request.mediaType ?? ''];
  const bytes = Buffer.isBuffer(request.body) ? request.body : Buffer.alloc(0);
  const metadata = validateMetadata({ ...query }, 'querystring');
  if (metadata.file_name !== undefined) return { bytes, format, fileName: metadata.file_name, sourceName: metadata.file_name, metadata };
  // Named after the sample: the result's netlists name their subcircuits after the file, and a SPICE deck that includes several devices needs them apart.
  // Errors say it is the body, not a file of that name the bench would look for.
  const fileName = `${metadata.sample_id}.${format}`;
  return { bytes, format, fileName, sourceName: `upload body (named ${fileName})`, metadata };
}

/**
 * Multipart: one `file` part, and metadata as a `meta` JSON field and/or one
 * field per metadata name (repeat `tags` for several); fields override query
 * parameters.
 */
export async function readMultipartUpload(request: FastifyRequest, query: Partial<UploadQuery>): Promise<UploadRequest> {
  let file: { bytes: Buffer; fileName: string; mimeType: string } | undefined;
  const fields: Record<string, string | string[]> = {};
  const metas: unknown[] = [];
  try {
    for await (const part of request.parts()) {
      if (part.type === 'file' && part.fieldname === 'meta') {
        // curl's -F "meta=@meta.json" sends the metadata as a file part (bounded like the file): taken as the field it means.
        metas.push((await part.toBuffer()).toString('utf8'));
      } else if (part.type === 'file') {
        if (file !== undefined || part.fieldname !== 'file') throw new HeatpathError('REQUEST_INVALID', `multipart holds an unexpected file part "${part.fieldname}"; send exactly one, named "file" (and the metadata as fields, or as one "meta" part)`);
        file = { bytes: await part.toBuffer(), fileName: part.filename || 'upload', mimeType: part.mimetype };
      } else {
        if (part.valueTruncated) throw new HeatpathError('UPLOAD_TOO_LARGE', `multipart field "${part.fieldname}" is too long`);
        // A part sent as application/json (as the OpenAPI document declares meta) arrives parsed by the multipart plugin.
        if (part.fieldname === 'meta') {
          metas.push(part.value);
          continue;
        }
        const value = fieldText(part.fieldname, part.value);
        const earlier = fields[part.fieldname];
        fields[part.fieldname] = earlier === undefined ? value : [earlier, value].flat();
      }
    }
  } catch (error) {
    throw asClientError(error);
  }
  if (file === undefined) throw new HeatpathError('REQUEST_INVALID', 'multipart body has no part named "file"');
  const format = rawFormats[file.mimeType] ?? formatFromName(file.fileName);
  const meta = metaObject(metas);
  refuseTwoSampleIds(query.sample_id, meta?.sample_id, fields.sample_id);
  const metadata = validateMetadata({ ...query, ...mergeFields(fields, meta) }, 'multipart');
  const fileName = metadata.file_name ?? file.fileName;
  return { bytes: file.bytes, fileName, sourceName: fileName, format, metadata };
}

/**
 * A metadata field's text. One sent as application/json arrives parsed: a JSON string, number or boolean is taken
 * as the text it stands for; an object or array has no text form (only "meta" holds an object).
 */
function fieldText(name: string, value: unknown): string {
  if (typeof value === 'string') return value;
  if (typeof value === 'number' || typeof value === 'boolean') return String(value);
  throw new HeatpathError('REQUEST_INVALID', `multipart field "${name}" holds a JSON ${Array.isArray(value) ? 'array' : value === null ? 'null' : 'object'}: send its value as plain text (repeat the field for several tags), or put the metadata as one JSON object in the "meta" field`);
}

/**
 * Fields override query parameters and the `meta` object, but not for the sample id: an upload filed under one of two
 * ids the same request gives is filed wrong half the time, and silently.
 */
function refuseTwoSampleIds(fromQuery: string | undefined, fromMeta: unknown, fromField: string | string[] | undefined): void {
  const given = [
    ['the query', fromQuery],
    ['the meta field', fromMeta],
    ['the sample_id field', fromField],
  ].filter((source): source is [string, string | string[]] => source[1] !== undefined);
  const ids = new Set(given.flatMap(([, id]) => [id].flat().map(String)));
  if (ids.size > 1) {
    throw new HeatpathError('REQUEST_INVALID', `the request names more than one sample id (${given.map(([where, id]) => `${[id].flat().join(', ')} in ${where}`).join('; ')}): give the sample id once`);
  }
}

/** The `meta` field as an object, sent as text or as `application/json` (then already parsed): one check for both; undefined without one. */
function metaObject(metas: unknown[]): Record<string, unknown> | undefined {
  if (metas.length === 0) return undefined;
  if (metas.length > 1) throw new HeatpathError('REQUEST_INVALID', 'multipart field "meta" appears more than once');
  let parsed = metas[0];
  if (typeof parsed === 'string') {
    try {
      // A meta.json saved by a Windows editor starts with a byte-order mark, as data files may.
      parsed = JSON.parse(parsed.replace(/^\uFEFF/, ''));
    } catch (error) {
      throw new HeatpathError('REQUEST_INVALID', `multipart field "meta" is not JSON: ${(error as Error).message}`);
    }
  }
  if (parsed === null || typeof parsed !== 'object' || Array.isArray(parsed)) throw new HeatpathError('REQUEST_INVALID', 'multipart field "meta" must be a JSON object');
  return parsed as Record<string, unknown>;
}

/** The named fields over the `meta` object. */
function mergeFields(fields: Record<string, string | string[]>, meta: Record<string, unknown> | undefined): Record<string, unknown> {
  const named = withRequestCycleCount(fields, 'multipart field cycle_count');
  if (meta === undefined) return named;
  return { ...withRequestCycleCount(meta, 'multipart field "meta", key cycle_count'), ...named };
}

/** Compiled once, as fastify compiles its route schemas: every upload is checked (27 us instead of 36 us measured). */
const metadataValidator = Compile(UploadMetadataSchema);

/** The fields each form may send, for a did-you-mean on an unknown one (a calibration can only come in a multipart field). */
const metadataFormSchema = { querystring: UploadQuerySchema, multipart: UploadMetadataSchema };

/** Both forms end here: one TypeBox schema decides what metadata is valid. */
function validateMetadata(fields: Record<string, unknown>, source: 'querystring' | 'multipart'): UploadMetadata {
  const value = typedFieldsFromText(UploadMetadataSchema, fields, source === 'querystring' ? 'query parameter' : 'multipart field');
  if (metadataValidator.Check(value)) return value;
  const validation = metadataValidator.Errors(value);
  // Shaped like fastify's own validation errors, so the problem handler lists the fields the same way; with the
  // form's schema, for a did-you-mean on an unknown field.
  throw Object.assign(new Error(`${source} metadata is invalid`), { statusCode: 400, validation, validationContext: source, checkedSchema: metadataFormSchema[source] });
}

function formatFromName(fileName: string): TransientFormat | undefined {
  if (/\.json$/i.test(fileName)) return 'json';
  if (/\.(csv|tsv|txt)$/i.test(fileName)) return 'csv';
  return undefined;
}

/** Malformed multipart (the parser's own errors carry no status) is the client's fault. */
function asClientError(error: unknown): unknown {
  if (isHeatpathError(error)) return error;
  const code = (error as { code?: string }).code;
  // The parser counts parts and fields as a size limit (413), but a second file is a request of the wrong shape.
  if (code === 'FST_INVALID_JSON_FIELD_ERROR') {
    return new HeatpathError('REQUEST_INVALID', 'a multipart field sent as application/json is not valid JSON (or longer than the field limit): send it as valid JSON, or as plain text without that Content-Type');
  }
  if (code === 'FST_FILES_LIMIT') return new HeatpathError('REQUEST_INVALID', 'multipart holds more than one file part besides "meta"; send exactly one, named "file"');
  if (code === 'FST_PARTS_LIMIT' || code === 'FST_FIELDS_LIMIT') {
    return new HeatpathError('REQUEST_INVALID', `multipart holds too many parts or fields (${(error as Error).message}); send one "file" part and the metadata fields, or one "meta" field`);
  }
  const status = (error as { statusCode?: number }).statusCode;
  if (status === 413) return error;
  return new HeatpathError('REQUEST_INVALID', `multipart body is malformed: ${(error as Error).message}`);
}
