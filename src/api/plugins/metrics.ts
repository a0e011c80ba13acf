/**
 * Prometheus metrics (prom-client) on a registry owned by one app instance, so several apps
 * in one process (tests) do not collide. Request counts and durations are labelled by route
 * pattern (`/v1/datasets/:id`), never by raw URL, so ids and data never reach a label.
 */
import type { FastifyInstance } from 'fastify';
import { collectDefaultMetrics, Counter, Histogram, Registry } from 'prom-client';

/** The metrics of one app. */
export interface AppMetrics {
  readonly registry: Registry;
  readonly httpRequests: Counter<'method' | 'route' | 'status'>;
  readonly httpDuration: Histogram<'method' | 'route' | 'status'>;
  /** Rows stored by dataset uploads and appended batches; `source` is csv, multipart or json. */
  readonly rowsIngested: Counter<'source'>;
}

/** Create a registry with the service's metrics (and the default process metrics). */
export function createMetrics(): AppMetrics {
  const registry = new Registry();
  collectDefaultMetrics({ register: registry });
  return {
    registry,
    httpRequests: new Counter({
      name: 'fulcrum_http_requests_total',
      help: 'HTTP requests answered, by method, route pattern and status code.',
      labelNames: ['method', 'route', 'status'],
      registers: [registry],
    }),
    httpDuration: new Histogram({
      name: 'fulcrum_http_request_duration_seconds',
      help: 'HTTP request duration in seconds, by method, route pattern and status code.',
      labelNames: ['method', 'route', 'status'],
      buckets: [0.001, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30, 60],
      registers: [registry],
    }),
    rowsIngested: new Counter({
      name: 'fulcrum_rows_ingested_total',
      help: 'Dataset rows stored (uploads and appended batches), by source format.',
      labelNames: ['source'],
      registers: [registry],
    }),
  };
}

/** Record every response and serve GET /metrics in the Prometheus text format. */
export function installMetrics(app: FastifyInstance, metrics: AppMetrics): void {
  app.addHook('onResponse', async (request, reply) => {
    const route = request.routeOptions.url ?? 'unmatched';
    const labels = { method: request.method, route, status: String(reply.statusCode) };
    metrics.httpRequests.inc(labels);
    metrics.httpDuration.observe(labels, reply.elapsedTime / 1000);
  });

  app.get(
    '/metrics',
    { schema: { hide: true }, config: { rateLimit: false } },
    async (_request, reply) => {
      reply.type(metrics.registry.contentType);
      return metrics.registry.metrics();
    },
  );
}
