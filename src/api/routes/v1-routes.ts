/**
 * Everything under /v1: one auth hook, then the resources. Only JSON (and, in the datasets
 * context, CSV and multipart) bodies are accepted; any other content type answers 415.
 */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import type { DatasetsService } from '../../app/datasets/datasets-service.js';
import type { KeyDeps } from '../../app/keys/key-use-cases.js';
import type { Config } from '../../config.js';
import { createAuthCache } from '../../app/keys/auth-cache.js';
import { installAuth } from '../plugins/auth.js';
import type { AppMetrics } from '../plugins/metrics.js';
import type { ModelsService } from '../../app/models/models-service.js';
import type { QueriesService } from '../../app/queries/queries-service.js';
import { datasetsRoutes } from './datasets-routes.js';
import { effectsRoutes } from './effects-routes.js';
import { jobsRoutes } from './jobs-routes.js';
import { modelsRoutes } from './models-routes.js';
import { reportLinkRoutes } from './report-routes.js';
import { keysRoutes } from './keys-routes.js';

/** Options of the /v1 context. */
export interface V1Options {
  deps: KeyDeps;
  datasets: DatasetsService;
  models: ModelsService;
  queries: QueriesService;
  config: Config;
  metrics: AppMetrics;
  /** Secret signing read-only report links. */
  linkSecret: string;
}

export const v1Routes: FastifyPluginAsyncZod<V1Options> = async (v1, opts) => {
  v1.removeContentTypeParser('text/plain');
  const auth = createAuthCache(opts.deps.keys);
  installAuth(v1, auth);
  await v1.register(keysRoutes, { deps: opts.deps, auth });
  await v1.register(datasetsRoutes, { service: opts.datasets, config: opts.config, metrics: opts.metrics });
  await v1.register(modelsRoutes, { models: opts.models });
  await v1.register(jobsRoutes, { models: opts.models });
  await v1.register(effectsRoutes, { queries: opts.queries });
  await v1.register(reportLinkRoutes, { models: opts.models, queries: opts.queries, secret: opts.linkSecret });
};
