/**
 * /v1/jobs: show, list (optionally by model), cancel, and a server-sent-events stream of a
 * job's progress. The stream reads the jobs table (the record every worker on every machine
 * writes), sends the job on each change, and ends when the job is final.
 */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import type { ModelsService } from '../../app/models/models-service.js';
import { IdParams, JobList, JobsQuery, JobView } from '../schemas/models.js';
import { jobView } from './models-routes.js';

export interface JobsRouteOptions {
  models: ModelsService;
  /** How often the event stream looks for changes, in ms. Default 250. */
  pollMs?: number;
}

const FINAL = new Set(['succeeded', 'failed', 'cancelled']);

export const jobsRoutes: FastifyPluginAsyncZod<JobsRouteOptions> = async (app, { models, pollMs = 250 }) => {
  const tags = ['jobs'];

  app.get('/jobs', { schema: { tags, summary: 'List jobs, newest first', querystring: JobsQuery, response: { 200: JobList } } }, async (request) => ({
    jobs: (await models.listJobs(request.principal.workspaceId, request.query)).map(jobView),
  }));

  app.get('/jobs/:id', { schema: { tags, summary: 'Show a job: state, stage, percent, error', params: IdParams, response: { 200: JobView } } }, async (request) =>
    jobView(await models.job(request.principal.workspaceId, request.params.id)),
  );

  app.post(
    '/jobs/:id/cancel',
    { schema: { tags, summary: 'Cancel a queued or running fit (no version is written)', params: IdParams, response: { 200: JobView } } },
    async (request) => jobView(await models.cancelJob(request.principal.workspaceId, request.params.id)),
  );

  app.get(
    '/jobs/:id/events',
    {
      schema: {
        tags,
        summary: 'Server-sent events: the job on every change of stage or percent, until it ends',
        description: 'Each event is `event: job` with the job as JSON data; the stream closes after a final state (succeeded, failed, cancelled).',
        params: IdParams,
        produces: ['text/event-stream'],
      },
    },
    async (request, reply) => {
      const { workspaceId } = request.principal;
      // Resolve first, so an unknown job is a plain 404 problem, not an empty stream.
      let job = await models.job(workspaceId, request.params.id);
      reply.hijack();
      const res = reply.raw;
      res.writeHead(200, {
        'content-type': 'text/event-stream; charset=utf-8',
        'cache-control': 'no-cache, no-transform',
        connection: 'keep-alive',
        'x-accel-buffering': 'no',
      });
      let closed = false;
      request.raw.on('close', () => {
        closed = true;
      });
      let last = '';
      let beat = Date.now();
      while (!closed) {
        const body = JSON.stringify(jobView(job));
        if (body !== last) {
          res.write(`event: job\ndata: ${body}\n\n`);
          last = body;
        } else if (Date.now() - beat > 15_000) {
          res.write(': keep-alive\n\n');
          beat = Date.now();
        }
        if (FINAL.has(job.state)) break;
        await new Promise((r) => setTimeout(r, pollMs));
        try {
          job = await models.job(workspaceId, job.id);
        } catch {
          break; // deleted with its model
        }
      }
      res.end();
    },
  );
};
