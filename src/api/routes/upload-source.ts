/**
 * How an upload reached us: a text/csv stream, a multipart file, or JSON. Resolves the dataset
 * name and declared kinds from the query string (or multipart fields) and wraps every stream
 * in the upload byte limit.
 */
import type { Readable } from 'node:stream';
import type { MultipartFile } from '@fastify/multipart';
import type { FastifyRequest } from 'fastify';
import type { SchemaDeclaration as SchemaDeclarationType } from '../../app/datasets/types.js';
import { apiError } from '../../errors/catalogue.js';
import { FulcrumError } from '../../errors/fulcrum-error.js';
import { limitBytes, type ByteLimit } from '../plugins/csv-body.js';
import { ColumnKind, DatasetName, SchemaDeclaration } from '../schemas/datasets.js';

/** Media types the upload routes accept. */
export const UPLOAD_MEDIA_TYPES = ['text/csv', 'multipart/form-data', 'application/json'] as const;

/** Lower-cased media type without parameters, or '' when absent. */
export function mediaTypeOf(request: FastifyRequest): string {
  return String(request.headers['content-type'] ?? '').split(';')[0].trim().toLowerCase();
}

function invalid(location: string, field: string, reason: string): FulcrumError {
  const e = apiError('ERR_REQUEST_VALIDATION', { location, field, reason });
  return new FulcrumError(e.code, e.status, e.message, { location, field, errors: [{ location, field, reason }] });
}

/** Parse "col:kind,col:kind" (the last ':' of each item separates name and kind). */
export function parseKinds(text: string, location: string): SchemaDeclarationType {
  const out: SchemaDeclarationType = {};
  for (const raw of text.split(',')) {
    const item = raw.trim();
    if (item.length === 0) continue;
    const at = item.lastIndexOf(':');
    const name = at > 0 ? item.slice(0, at).trim() : '';
    const kind = ColumnKind.safeParse(at > 0 ? item.slice(at + 1).trim() : '');
    if (!name || !kind.success) {
      throw invalid(location, 'kinds', `each item must read column:kind with kind continuous, binary or categorical (item ${JSON.stringify(item.slice(0, 80))})`);
    }
    out[name] = kind.data;
  }
  return out;
}

/** Parse the `schema` parameter (JSON object of declarations). */
export function parseSchemaParam(text: string, location: string): SchemaDeclarationType {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch {
    throw invalid(location, 'schema', 'is not valid JSON');
  }
  const parsed = SchemaDeclaration.safeParse(json);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw invalid(location, `schema.${issue.path.join('.')}`, issue.message);
  }
  return parsed.data;
}

/** Declarations from `kinds` and/or `schema` (schema wins for a column named in both). */
export function declarations(kinds: string | undefined, schema: string | undefined, location: string): SchemaDeclarationType | undefined {
  if (kinds === undefined && schema === undefined) return undefined;
  return { ...(kinds ? parseKinds(kinds, location) : {}), ...(schema ? parseSchemaParam(schema, location) : {}) };
}

/** Refuses (400) form fields a new dataset does not take, naming the ones it does. */
export function refuseUnknownFields(fields: CsvUpload['fields']): void {
  const k = fields?.others[0];
  if (k !== undefined) throw invalid('form', k, `is not a field of this upload; send only ${FORM_FIELDS.join(', ')} (before the file)`);
}

/** Check a dataset name from a query string or form field. */
export function checkedName(name: string | undefined, location: string): string {
  if (name === undefined) throw invalid(location, 'name', 'Required: a dataset name');
  const parsed = DatasetName.safeParse(name);
  if (!parsed.success) throw invalid(location, 'name', parsed.error.issues[0].message);
  return parsed.data;
}

/** The form fields a multipart upload may send before its file. */
export const FORM_FIELDS = ['name', 'kinds', 'schema'];

/** A streamed CSV upload, already behind the byte limit. */
export interface CsvUpload {
  body: ByteLimit;
  /** Name and declarations from multipart fields (undefined for a text/csv body). */
  fields?: { name?: string; kinds?: string; schema?: string; filename?: string; others: string[] };
  /**
   * Multipart only: once the file has been read, the names of the parts that followed it. A
   * field there came too late to shape the upload (the file streams as it arrives), so the
   * caller refuses it rather than ignore it — whether the body arrived in one piece or not.
   */
  trailing?: () => Promise<string[]>;
}

/** The CSV stream of a text/csv body or of the first file part of a multipart body. */
export async function csvUpload(request: FastifyRequest, uploadLimit: number): Promise<CsvUpload> {
  if (mediaTypeOf(request) === 'text/csv') {
    return { body: limitBytes(request.body as Readable, uploadLimit) };
  }
  // One byte past the limit reaches the ByteLimit, which then refuses the upload (busboy would
  // otherwise cut the file at the limit silently). Parts come in the order they were sent:
  // the fields before the file, then the file, then (read after it) anything that followed.
  const parts = request.parts({ limits: { fileSize: uploadLimit + 1, files: 1, fields: 10, fieldSize: 200_000 } })[Symbol.asyncIterator]();
  const fields = new Map<string, string>();
  let file: MultipartFile | undefined;
  for (;;) {
    const next = await parts.next();
    if (next.done) throw apiError('ERR_REQUEST_MULTIPART_NO_FILE');
    const part = next.value;
    if (part.type === 'file') {
      file = part;
      break;
    }
    if (typeof part.value === 'string' && !fields.has(part.fieldname)) fields.set(part.fieldname, part.value);
  }
  const trailing = async (): Promise<string[]> => {
    const late: string[] = [];
    try {
      for (;;) {
        const next = await parts.next();
        if (next.done) return late;
        late.push(next.value.fieldname);
        if (next.value.type === 'file') next.value.file.resume();
      }
    } catch {
      // A second file (over the one-file limit) or a cut body: still a part after the file.
      late.push('(a further part)');
      return late;
    }
  };
  return {
    body: limitBytes(file.file, uploadLimit),
    fields: {
      name: fields.get('name'),
      kinds: fields.get('kinds'),
      schema: fields.get('schema'),
      filename: file.filename,
      others: [...fields.keys()].filter((k) => !FORM_FIELDS.includes(k)),
    },
    trailing,
  };
}

/** Refuses (400) an upload whose multipart body had parts after the file; call once the file has been read. */
export async function refuseTrailingParts(upload: CsvUpload): Promise<void> {
  const late = upload.trailing ? await upload.trailing() : [];
  if (late.length > 0) throw apiError('ERR_REQUEST_MULTIPART_FIELD_AFTER_FILE', { parts: late.map((n) => JSON.stringify(n)).join(', ') });
}

/** Run an ingest over a limited stream; a limit overrun reports 413 whatever the consumer made of it. */
export async function withUploadLimit<T>(upload: CsvUpload, work: () => Promise<T>): Promise<T> {
  try {
    return await work();
  } catch (err) {
    if (upload.body.exceeded) throw upload.body.exceeded;
    throw err;
  } finally {
    if (!upload.body.destroyed) upload.body.destroy();
  }
}
