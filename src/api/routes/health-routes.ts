/**
 * Liveness and readiness. /healthz answers while the process runs; /readyz only when the
 * database (and Redis, when configured) answer and the process is not shutting down.
 */
import type { FastifyInstance } from 'fastify';
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import type { Redis } from 'ioredis';
import { z } from 'zod';
import type { Db } from '../../store/db.js';

/** What readiness checks. */
export interface HealthOptions {
  db: Db;
  redis: Redis | null;
  /** True once shutdown began: /readyz then answers 503 so load balancers drain the instance. */
  isShuttingDown: () => boolean;
  /** Per-check timeout in ms. Default 2000. */
  timeoutMs?: number;
}

const CheckState = z.enum(['ok', 'failed', 'skipped']);
const Readiness = z.object({
  status: z.enum(['ready', 'not_ready']),
  checks: z.object({ database: CheckState, redis: CheckState, shutdown: CheckState }),
});

async function within<T>(ms: number, work: Promise<T>): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`check timed out after ${ms} ms`)), ms);
  });
  try {
    return await Promise.race([work, timeout]);
  } finally {
    clearTimeout(timer);
  }
}

async function probe(ms: number, work: () => Promise<unknown>, log: FastifyInstance['log'], name: string): Promise<'ok' | 'failed'> {
  try {
    await within(ms, work());
    return 'ok';
  } catch (err) {
    log.warn({ check: name, err: (err as Error).message }, 'readiness check failed');
    return 'failed';
  }
}

/** GET /healthz and GET /readyz. */
export const healthRoutes: FastifyPluginAsyncZod<HealthOptions> = async (app, opts) => {
  const ms = opts.timeoutMs ?? 2000;

  app.get(
    '/healthz',
    {
      config: { rateLimit: false },
      schema: { tags: ['operations'], security: [], summary: 'Liveness: the process is up', response: { 200: z.object({ status: z.literal('ok') }) } },
    },
    async () => ({ status: 'ok' as const }),
  );

  app.get(
    '/readyz',
    {
      config: { rateLimit: false },
      schema: {
        tags: ['operations'],
        security: [],
        summary: 'Readiness: the database (and Redis when configured) answer',
        response: { 200: Readiness, 503: Readiness },
      },
    },
    async (request, reply) => {
      type State = z.infer<typeof CheckState>;
      const shutdown: State = opts.isShuttingDown() ? 'failed' : 'ok';
      const database: State = await probe(ms, () => opts.db.query('SELECT 1'), request.log, 'database');
      const redis: State = opts.redis ? await probe(ms, () => opts.redis!.ping(), request.log, 'redis') : 'skipped';
      const ready = shutdown === 'ok' && database === 'ok' && redis !== 'failed';
      reply.code(ready ? 200 : 503);
      return { status: ready ? ('ready' as const) : ('not_ready' as const), checks: { database, redis, shutdown } };
    },
  );
};
