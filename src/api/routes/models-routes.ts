/**
 * /v1/models: create (enqueues the first fit), list, show, delete, refit; versions (list,
 * show, graph as JSON or Graphviz DOT, diff); refit schedules. read scope for GETs, write
 * otherwise. Another workspace's model is "not found" (404), like one that does not exist.
 */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { versionGraphView } from '../../app/models/graph-reading.js';
import type { ModelsService } from '../../app/models/models-service.js';
import type { z } from 'zod';
import type { JobRow } from '../../store/jobs-repository.js';
import type { ModelRow, VersionMeta } from '../../store/models-repository.js';
import {
  CreatedModel,
  CreateModelBody,
  DiffQuery,
  DiffView,
  GraphView,
  IdParams,
  JobView,
  ModelList,
  ModelView,
  ScheduleBody,
  ScheduleView,
  VersionList,
  VersionParams,
  VersionView,
} from '../schemas/models.js';

export interface ModelsRouteOptions {
  models: ModelsService;
}

export const modelView = (m: ModelRow) => ({
  id: m.id,
  name: m.name,
  datasetId: m.datasetId,
  spec: m.spec,
  currentVersionId: m.currentVersionId,
  createdAt: m.createdAt,
  updatedAt: m.updatedAt,
});

export const jobView = (j: JobRow) => ({
  id: j.id,
  modelId: j.modelId,
  kind: j.kind,
  trigger: j.trigger,
  state: j.state,
  stage: j.stage,
  percent: j.percent,
  message: j.message,
  error: j.error,
  attempts: j.attempts,
  replicatesTotal: j.replicatesTotal,
  replicatesDone: j.replicatesDone,
  versionId: j.versionId,
  createdAt: j.createdAt,
  startedAt: j.startedAt,
  finishedAt: j.finishedAt,
});

const versionView = (v: VersionMeta) => ({
  id: v.id,
  modelId: v.modelId,
  number: v.number,
  jobId: v.jobId,
  spec: v.spec,
  datasetBatches: v.datasetBatches,
  rowCount: v.rowCount,
  diagnostics: v.diagnostics,
  timings: v.timings,
  createdAt: v.createdAt,
});

export const modelsRoutes: FastifyPluginAsyncZod<ModelsRouteOptions> = async (app, { models }) => {
  const tags = ['models'];

  app.post(
    '/models',
    {
      schema: {
        tags,
        summary: 'Create a model and start its first fit',
        description: 'Checks the spec against the dataset (variables, knowledge, fixed graph), then enqueues a fit job. Follow the job at /v1/jobs/{id} or its event stream.',
        body: CreateModelBody,
        response: { 202: CreatedModel },
      },
    },
    async (request, reply) => {
      const { model, job } = await models.create(request.principal.workspaceId, request.body);
      reply.code(202).header('location', `/v1/models/${model.id}`);
      return { model: modelView(model), job: jobView(job) };
    },
  );

  app.get('/models', { schema: { tags, summary: 'List models', response: { 200: ModelList } } }, async (request) => ({
    models: (await models.list(request.principal.workspaceId)).map(modelView),
  }));

  app.get('/models/:id', { schema: { tags, summary: 'Show a model', params: IdParams, response: { 200: ModelView } } }, async (request) =>
    modelView(await models.get(request.principal.workspaceId, request.params.id)),
  );

  app.delete('/models/:id', { schema: { tags, summary: 'Delete a model, its versions, jobs and schedule', params: IdParams } }, async (request, reply) => {
    await models.remove(request.principal.workspaceId, request.params.id);
    return reply.code(204).send();
  });

  app.post(
    '/models/:id/fits',
    { schema: { tags, summary: 'Refit the model on the dataset’s newest batches', params: IdParams, response: { 202: JobView } } },
    async (request, reply) => {
      const job = await models.refit(request.principal.workspaceId, request.params.id);
      reply.code(202).header('location', `/v1/jobs/${job.id}`);
      return jobView(job);
    },
  );

  app.get(
    '/models/:id/versions',
    { schema: { tags, summary: 'List the fitted versions of a model', params: IdParams, response: { 200: VersionList } } },
    async (request) => ({ versions: (await models.listVersions(request.principal.workspaceId, request.params.id)).map(versionView) }),
  );

  app.get(
    '/models/:id/versions/:version',
    {
      schema: {
        tags,
        summary: 'Show a version (spec, batches used, diagnostics, timings)',
        description: '`version` is a version number, a version id, or "current".',
        params: VersionParams,
        response: { 200: VersionView },
      },
    },
    async (request) => versionView(await models.version(request.principal.workspaceId, request.params.id, request.params.version)),
  );

  app.get(
    '/models/:id/versions/:version/graph',
    {
      schema: {
        tags,
        summary: 'The graph of a version: nodes, edges with their probabilities, and the distinct DAGs with weights',
        params: VersionParams,
        response: { 200: GraphView },
      },
    },
    async (request) => {
      const v = await models.version(request.principal.workspaceId, request.params.id, request.params.version);
      return { model: v.modelId, version: v.number, ...(versionGraphView(v) as Omit<z.infer<typeof GraphView>, 'model' | 'version'>) };
    },
  );

  app.get(
    '/models/:id/versions/:version/graph.dot',
    {
      schema: {
        tags,
        summary: 'The graph of a version as Graphviz DOT (edge labels and pen widths by probability; dashed below 0.5)',
        params: VersionParams,
        produces: ['text/vnd.graphviz'],
      },
    },
    async (request, reply) => {
      const dot = await models.graphDot(request.principal.workspaceId, request.params.id, request.params.version);
      return reply.type('text/vnd.graphviz; charset=utf-8').send(dot);
    },
  );

  app.get(
    '/models/:id/diff',
    {
      schema: {
        tags,
        summary: 'How the graph changed between two versions',
        description: 'Edges gained and lost (probability crossing 0.5) and every probability change of at least 0.05.',
        params: IdParams,
        querystring: DiffQuery,
        response: { 200: DiffView },
      },
    },
    async (request) => models.diff(request.principal.workspaceId, request.params.id, request.query.from, request.query.to),
  );

  const scheduleView = (s: { modelId: string; cron: string; tz: string; createdAt: string; updatedAt: string; next?: string }) => ({
    modelId: s.modelId,
    cron: s.cron,
    timezone: s.tz,
    next: s.next,
    createdAt: s.createdAt,
    updatedAt: s.updatedAt,
  });

  app.put(
    '/models/:id/schedule',
    { schema: { tags, summary: 'Set the refit schedule (cron and time zone)', params: IdParams, body: ScheduleBody, response: { 200: ScheduleView } } },
    async (request) => {
      const { workspaceId } = request.principal;
      await models.putSchedule(workspaceId, request.params.id, request.body.cron, request.body.timezone);
      return scheduleView(await models.getSchedule(workspaceId, request.params.id));
    },
  );

  app.get('/models/:id/schedule', { schema: { tags, summary: 'Show the refit schedule', params: IdParams, response: { 200: ScheduleView } } }, async (request) =>
    scheduleView(await models.getSchedule(request.principal.workspaceId, request.params.id)),
  );

  app.delete('/models/:id/schedule', { schema: { tags, summary: 'Remove the refit schedule', params: IdParams } }, async (request, reply) => {
    await models.removeSchedule(request.principal.workspaceId, request.params.id);
    return reply.code(204).send();
  });
};
