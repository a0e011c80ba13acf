/**
 * The app factory. It only composes, in this order:
 *   1. the error handler and zod compilers (so every later plugin's errors map to problem+json),
 *   2. external plugins (security headers, sensible, rate limit, OpenAPI) — before routes, so
 *      their hooks and the document cover every route,
 *   3. app plugins: database handle, repositories (keys, workspaces), the datasets service, metrics,
 *   4. routes: operations at the root, the API under /v1 behind the auth hook.
 * The caller owns the database and closes it after `app.close()`.
 */
import { randomBytes } from 'node:crypto';
import helmet from '@fastify/helmet';
import rateLimit from '@fastify/rate-limit';
import sensible from '@fastify/sensible';
import Fastify, { type FastifyInstance, type FastifyServerOptions } from 'fastify';
import { serializerCompiler, validatorCompiler, type ZodTypeProvider } from 'fastify-type-provider-zod';
import { Redis } from 'ioredis';
import type { Config } from '../config.js';
import { apiError } from '../errors/catalogue.js';
import type { Db } from '../store/db.js';
import { createDatasetsService } from '../app/datasets/datasets-service.js';
import { createKeysRepository } from '../store/keys-repository.js';
import { createModelsService, type ModelsService } from '../app/models/models-service.js';
import { createQueriesService, type QueriesService } from '../app/queries/queries-service.js';
import { createInProcessQueue } from '../jobs/in-process-queue.js';
import type { QueuePort } from '../jobs/queue-port.js';
import { createWorkspacesRepository } from '../store/workspaces-repository.js';
import { loggerOptions } from './logger.js';
import { installErrorHandler } from './plugins/error-handler.js';
import { createMetrics, installMetrics, type AppMetrics } from './plugins/metrics.js';
import { installOpenApi } from './plugins/openapi.js';
import { healthRoutes } from './routes/health-routes.js';
import { v1Routes } from './routes/v1-routes.js';
import { reportPageRoutes } from './routes/report-routes.js';

/** What buildApp needs. */
export interface BuildAppOptions {
  /** Parsed configuration (limits, rate limit, log level, REDIS_URL). */
  config: Config;
  /** An opened, migrated database. Owned by the caller. */
  db: Db;
  /**
   * Redis client for readiness. Default: a client on `config.REDIS_URL` when set (closed with the
   * app), else none. Pass `null` to skip Redis even when configured.
   */
  redis?: Redis | null;
  /** fastify logger setting. Default: pino with `loggerOptions(config)`. */
  logger?: FastifyServerOptions['logger'];
  /** Service version shown in the OpenAPI document. */
  version?: string;
  /**
   * The job queue fits are enqueued on (owned by the caller). Default: the queue of `models`
   * when given, else an in-process queue with no workers, closed with the app — fits then wait
   * until a worker is started on it.
   */
  queue?: QueuePort;
  /**
   * The model use cases, built by the caller over `db` and the queue so that the fit runtime
   * of the same process shares them. Default: built here.
   */
  models?: ModelsService;
}

declare module 'fastify' {
  interface FastifyInstance {
    /** The job queue fits go to. */
    queue: QueuePort;
    /** Model, version, job and schedule use cases. */
    models: ModelsService;
    /** Effect queries from compiled versions. */
    queries: QueriesService;
    /** The database handle (owned by whoever built the app). */
    db: Db;
    /** Prometheus metrics of this app; the dataset routes increment `rowsIngested`. */
    metrics: AppMetrics;
    /** Mark the app as shutting down: /readyz answers 503 from then on. */
    beginShutdown(): void;
  }
}

/** Build the HTTP app (not listening; call `listen`, or use `inject`/supertest in tests). */
export async function buildApp(options: BuildAppOptions): Promise<FastifyInstance> {
  const { config, db } = options;
  if (options.models && (options.models.deps.db !== db || (options.queue && options.models.deps.queue !== options.queue))) {
    throw new TypeError('buildApp: models must be built over the same database and queue as the app');
  }
  const queue = options.queue ?? options.models?.deps.queue ?? createInProcessQueue();
  const ownsQueue = options.queue === undefined && options.models === undefined;
  const app = Fastify({
    logger: options.logger ?? loggerOptions(config),
    bodyLimit: config.FULCRUM_BODY_LIMIT_BYTES,
    requestIdHeader: 'x-request-id',
    // Streamed uploads can take minutes; do not cut them off.
    requestTimeout: 0,
    // Requests arriving while closing get ERR_SERVER_SHUTTING_DOWN from the hook below instead.
    return503OnClosing: false,
  }).withTypeProvider<ZodTypeProvider>();

  // 1. Error mapping and zod compilers.
  app.setValidatorCompiler(validatorCompiler);
  app.setSerializerCompiler(serializerCompiler);
  installErrorHandler(app, { bodyLimit: config.FULCRUM_BODY_LIMIT_BYTES });

  // 2. External plugins.
  await app.register(helmet, {
    contentSecurityPolicy: {
      directives: {
        defaultSrc: ["'self'"],
        scriptSrc: ["'self'"],
        styleSrc: ["'self'", "'unsafe-inline'"],
        imgSrc: ["'self'", 'data:'],
        // The service often runs on plain HTTP inside a network; do not make browsers
        // rewrite the /docs page's assets to https.
        upgradeInsecureRequests: null,
      },
    },
  });
  await app.register(sensible);
  if (config.FULCRUM_RATE_LIMIT_MAX > 0) {
    await app.register(rateLimit, {
      max: config.FULCRUM_RATE_LIMIT_MAX,
      timeWindow: config.FULCRUM_RATE_LIMIT_WINDOW_MS,
      // Counted after authentication, so a budget belongs to a real key (invented keys get 401
      // first and cannot open fresh budgets); unauthenticated routes count per client address.
      hook: 'preHandler',
      keyGenerator: (request) => (request.principal ? `key:${request.principal.keyId}` : `ip:${request.ip}`),
      errorResponseBuilder: (_request, context) =>
        apiError('ERR_REQUEST_RATE_LIMITED', {
          max: context.max,
          windowMs: config.FULCRUM_RATE_LIMIT_WINDOW_MS,
          retryAfterS: Math.ceil(context.ttl / 1000),
        }),
    });
  }
  await installOpenApi(app, options.version ?? '0.1.0');

  // 3. App plugins: database, repositories, use-case services, metrics.
  let shuttingDown = false;
  const ownsRedis = options.redis === undefined && config.REDIS_URL !== undefined;
  const redis = ownsRedis ? new Redis(config.REDIS_URL!, { lazyConnect: true, maxRetriesPerRequest: 1 }) : (options.redis ?? null);
  // Connection trouble shows in /readyz; keep ioredis from printing unhandled-error noise.
  if (ownsRedis) redis!.on('error', (err: Error) => app.log.debug({ err: err.message }, 'redis connection error'));
  const metrics = createMetrics();
  const keys = createKeysRepository(db);
  const workspaces = createWorkspacesRepository(db);
  const datasets = createDatasetsService(db);
  const models = options.models ?? createModelsService(db, queue);
  const queries = createQueriesService(models);
  // Without a configured secret, links are signed with a per-process one and end at a restart.
  const linkSecret = config.FULCRUM_LINK_SECRET ?? randomBytes(32).toString('base64url');
  app.decorate('db', db);
  app.decorate('queue', queue);
  app.decorate('models', models);
  app.decorate('queries', queries);
  app.decorate('metrics', metrics);
  app.decorate('beginShutdown', () => {
    shuttingDown = true;
  });
  installMetrics(app, metrics);
  let closing = false;
  app.addHook('preClose', async () => {
    closing = true;
  });
  app.addHook('onRequest', async (request, reply) => {
    reply.header('x-request-id', request.id); // the id problems and log lines carry
    if (closing) throw apiError('ERR_SERVER_SHUTTING_DOWN');
  });
  app.addHook('onClose', async () => {
    shuttingDown = true;
    if (ownsRedis && redis) redis.disconnect();
    if (ownsQueue) await queue.close();
  });

  // 4. Routes.
  await app.register(healthRoutes, { db, redis, isShuttingDown: () => shuttingDown });
  await app.register(v1Routes, { prefix: '/v1', deps: { db, keys, workspaces }, datasets, models, queries, config, metrics, linkSecret });
  // The report page sits outside /v1: a signed link stands in for the key a plain link cannot send.
  await app.register(reportPageRoutes, { models, queries, secret: linkSecret });

  return app;
}
