/**
 * pino options for the request log: method, route, status and timing only. Query strings,
 * bodies and headers are not logged; the Authorization header is redacted should anything
 * log a raw request.
 */
import type { FastifyServerOptions } from 'fastify';
import type { Config } from '../config.js';

type LoggerOptions = Exclude<FastifyServerOptions['logger'], boolean | undefined>;

/** True when pino-pretty (a dev dependency) is installed. */
function prettyInstalled(): boolean {
  try {
    import.meta.resolve('pino-pretty');
    return true;
  } catch {
    return false;
  }
}

/** Logger options for a config; `pretty` uses pino-pretty (when installed) on a terminal outside production. */
export function loggerOptions(config: Config, pretty = false): LoggerOptions {
  return {
    level: config.LOG_LEVEL,
    redact: {
      paths: ['req.headers.authorization', 'headers.authorization', 'authorization', 'request.headers.authorization'],
      censor: '[redacted]',
    },
    serializers: {
      req(req: { method: string; url: string; id: string; routeOptions?: { url?: string } }) {
        // Path only: query strings can carry dataset names and column declarations.
        return { id: req.id, method: req.method, path: req.url.split('?')[0] };
      },
      res(res: { statusCode: number }) {
        return { statusCode: res.statusCode };
      },
    },
    ...(pretty && config.NODE_ENV !== 'production' && prettyInstalled()
      ? { transport: { target: 'pino-pretty', options: { translateTime: 'SYS:HH:MM:ss', ignore: 'pid,hostname' } } }
      : {}),
  } as LoggerOptions;
}
