/**
 * /v1/datasets: create (streamed text/csv body, multipart file, or JSON), append a batch,
 * list, show (schema, batches, per-column stats), delete. read scope for GETs, write otherwise.
 * A dataset of another workspace is "not found" (404), exactly like one that does not exist.
 */
import multipart from '@fastify/multipart';
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import type { DatasetsService, JsonTable } from '../../app/datasets/datasets-service.js';
import type { IngestResult as IngestResultType } from '../../app/datasets/types.js';
import type { Config } from '../../config.js';
import { apiError } from '../../errors/catalogue.js';
import { withProblems } from '../schemas/problem.js';
import { installCsvBody } from '../plugins/csv-body.js';
import type { AppMetrics } from '../plugins/metrics.js';
import {
  AppendBatchJson,
  CreateDatasetJson,
  CsvBody,
  DatasetDetail,
  DatasetIdParams,
  DatasetList,
  IngestResult,
  MultipartBody,
  UploadQuery,
} from '../schemas/datasets.js';
import { checkedName, csvUpload, declarations, mediaTypeOf, refuseTrailingParts, refuseUnknownFields, UPLOAD_MEDIA_TYPES, withUploadLimit } from './upload-source.js';

/** Options of the datasets routes. */
export interface DatasetsRouteOptions {
  service: DatasetsService;
  config: Config;
  metrics: AppMetrics;
}

type CreateJson = z.infer<typeof CreateDatasetJson>;

const uploadBody = (json: typeof CreateDatasetJson | typeof AppendBatchJson) => ({
  content: {
    'text/csv': { schema: CsvBody },
    'multipart/form-data': { schema: MultipartBody },
    'application/json': { schema: json },
  },
});

export const datasetsRoutes: FastifyPluginAsyncZod<DatasetsRouteOptions> = async (app, { service, config, metrics }) => {
  const uploadLimit = config.FULCRUM_UPLOAD_LIMIT_BYTES;
  installCsvBody(app, uploadLimit);
  await app.register(multipart, { throwFileSizeLimit: true, limits: { fileSize: uploadLimit + 1, files: 1 } });

  const unsupported = (mediaType: string) =>
    apiError('ERR_REQUEST_UNSUPPORTED_MEDIA_TYPE', { contentType: mediaType || '(none)', accepted: UPLOAD_MEDIA_TYPES.join(', ') });

  const counted = (result: IngestResultType, source: 'csv' | 'multipart' | 'json') => {
    metrics.rowsIngested.inc({ source }, result.batch.rowCount);
    return result;
  };

  app.post(
    '/datasets',
    {
      config: { scope: 'write', accepts: UPLOAD_MEDIA_TYPES },
      schema: {
        tags: ['datasets'],
        summary: 'Create a dataset from a CSV body, a multipart file or JSON',
        description:
          'text/csv: the body is streamed; give `name` (and optionally `kinds`/`schema`) in the query string. multipart/form-data: fields `name`, `kinds`, `schema` before a file part `file`. application/json: {name, columns, rows, schema?}. Column kinds are inferred unless declared; empty cells and NA are missing.',
        querystring: UploadQuery,
        body: uploadBody(CreateDatasetJson) as never,
        response: withProblems({ 201: IngestResult }),
      },
    },
    async (request, reply) => {
      const { workspaceId } = request.principal;
      const mediaType = mediaTypeOf(request);
      let result: IngestResultType;
      if (mediaType === 'application/json') {
        const body = request.body as unknown as CreateJson;
        result = counted(await service.createFromJson({ workspaceId, name: body.name, table: body, schema: body.schema }), 'json');
      } else if (mediaType === 'text/csv' || mediaType === 'multipart/form-data') {
        const q = request.query;
        if (mediaType === 'text/csv') {
          // Refuse a bad query string before reading any of the body.
          checkedName(q.name, 'query');
          declarations(q.kinds, q.schema, 'query');
        }
        const upload = await csvUpload(request, uploadLimit);
        const f = upload.fields;
        result = await withUploadLimit(upload, async () => {
          refuseUnknownFields(f);
          const location = f ? 'form' : 'query';
          const name = checkedName(f?.name ?? q.name ?? f?.filename?.replace(/\.[^.]*$/, ''), f?.name ? location : 'query');
          const schema = declarations(f?.kinds ?? q.kinds, f?.schema ?? q.schema, location);
          return service.createFromCsv({ workspaceId, name, body: upload.body, schema, beforeCommit: () => refuseTrailingParts(upload) });
        });
        counted(result, f ? 'multipart' : 'csv');
      } else {
        throw unsupported(mediaType);
      }
      reply.code(201);
      return result;
    },
  );

  app.post(
    '/datasets/:id/batches',
    {
      config: { scope: 'write', accepts: UPLOAD_MEDIA_TYPES },
      schema: {
        tags: ['datasets'],
        summary: "Append a batch (validated against the dataset's columns and kinds)",
        description: 'Same body forms as creating a dataset; the columns must be exactly the dataset\'s (in any order). Batches are numbered 1, 2, …',
        params: DatasetIdParams,
        body: uploadBody(AppendBatchJson) as never,
        response: withProblems({ 201: IngestResult }),
      },
    },
    async (request, reply) => {
      const { workspaceId } = request.principal;
      const datasetId = request.params.id;
      const mediaType = mediaTypeOf(request);
      let result: IngestResultType;
      if (mediaType === 'application/json') {
        const table = request.body as unknown as JsonTable;
        result = counted(await service.appendJson({ workspaceId, datasetId, table }), 'json');
      } else if (mediaType === 'text/csv' || mediaType === 'multipart/form-data') {
        const upload = await csvUpload(request, uploadLimit);
        result = await withUploadLimit(upload, () => service.appendCsv({ workspaceId, datasetId, body: upload.body }));
        counted(result, upload.fields ? 'multipart' : 'csv');
      } else {
        throw unsupported(mediaType);
      }
      reply.code(201);
      return result;
    },
  );

  app.get(
    '/datasets',
    { config: { scope: 'read' }, schema: { tags: ['datasets'], summary: 'List the datasets of this workspace, newest first', response: withProblems({ 200: DatasetList }) } },
    async (request) => ({ datasets: await service.list(request.principal.workspaceId) }),
  );

  app.get(
    '/datasets/:id',
    {
      config: { scope: 'read' },
      schema: { tags: ['datasets'], summary: 'Show a dataset: schema, row count, batches, per-column statistics', params: DatasetIdParams, response: withProblems({ 200: DatasetDetail }) },
    },
    async (request) => service.get(request.principal.workspaceId, request.params.id),
  );

  app.delete(
    '/datasets/:id',
    {
      config: { scope: 'write' },
      schema: { tags: ['datasets'], summary: 'Delete a dataset and its rows', params: DatasetIdParams, response: withProblems({ 204: z.null().describe('Deleted') }) },
    },
    async (request, reply) => {
      await service.remove(request.principal.workspaceId, request.params.id);
      return reply.code(204).send(null);
    },
  );
};
