import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import type { Config } from '../../config.js';
import type { Db } from '../../store/db.js';
import type { AppMetrics } from '../plugins/metrics.js';

/** Options of the datasets routes. */
export interface DatasetsRouteOptions {
  db: Db;
  config: Config;
  metrics: AppMetrics;
}

export const datasetsRoutes: FastifyPluginAsyncZod<DatasetsRouteOptions> = async () => {};
