import { z } from 'zod';

/** Log levels pino understands, plus `silent` for tests. */
const LOG_LEVELS = ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'] as const;

const emptyToUndefined = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);

/**
 * Every environment variable the service reads, parsed and defaulted in one place.
 * Nothing else in `src/` reads `process.env`.
 */
export const configSchema = z.object({
  /** Port the HTTP server listens on. Default 3000. */
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  /** Interface to bind. Default 127.0.0.1 (set 0.0.0.0 inside a container). */
  HOST: z.string().min(1).default('127.0.0.1'),
  /** PostgreSQL connection string. Unset: the embedded PGlite back end in FULCRUM_DATA_DIR. */
  DATABASE_URL: z.preprocess(emptyToUndefined, z.string().url().optional()),
  /** Redis connection string. Unset: no Redis; /readyz checks only the database. */
  REDIS_URL: z.preprocess(emptyToUndefined, z.string().url().optional()),
  /** Folder of the embedded database when DATABASE_URL is unset. Default ./.fulcrum */
  FULCRUM_DATA_DIR: z.string().min(1).default('./.fulcrum'),
  /**
   * Admin key to install on first start (empty database) instead of generating one.
   * Must look like a key this service issues: `fk_<prefix>_<secret>`.
   */
  FULCRUM_BOOTSTRAP_KEY: z.preprocess(
    emptyToUndefined,
    z
      .string()
      .regex(/^fk_[A-Za-z0-9]{8,32}_[A-Za-z0-9_-]{32,128}$/, 'must look like fk_<8-32 letters or digits>_<32-128 url-safe characters>')
      .optional(),
  ),
  /** Largest accepted JSON (or other buffered) request body, in bytes. Default 16 MiB. */
  FULCRUM_BODY_LIMIT_BYTES: z.coerce.number().int().positive().default(16 * 1024 * 1024),
  /** Largest accepted streamed upload (text/csv body or multipart file), in bytes. Default 1 GiB. */
  FULCRUM_UPLOAD_LIMIT_BYTES: z.coerce.number().int().positive().default(1024 * 1024 * 1024),
  /** Requests allowed per client (key or address) per window. 0 switches the limit off. Default 600. */
  FULCRUM_RATE_LIMIT_MAX: z.coerce.number().int().min(0).default(600),
  /** Rate-limit window in milliseconds. Default 60000. */
  FULCRUM_RATE_LIMIT_WINDOW_MS: z.coerce.number().int().positive().default(60_000),
  /** Fit jobs one process runs at once (each heavy step uses one compute thread). Default 2. */
  FULCRUM_WORKER_CONCURRENCY: z.coerce.number().int().min(1).max(64).default(2),
  /** BullMQ queue name (several deployments can share one Redis under different names). Default fulcrum. */
  FULCRUM_QUEUE_NAME: z.string().regex(/^[A-Za-z0-9_-]{1,64}$/).default('fulcrum'),
  /**
   * BullMQ lock on a running fit job, in ms: a job whose worker died is retried by another
   * worker once its lock expires (workers look every min(30 s, this)). Default 60000.
   */
  FULCRUM_JOB_LOCK_MS: z.coerce.number().int().min(1000).max(3_600_000).default(60_000),
  /**
   * Secret that signs read-only report links. Unset: a random secret per process, so links
   * stop working at a restart; set it (32+ characters) when links must survive restarts or
   * be served by several api replicas.
   */
  FULCRUM_LINK_SECRET: z.preprocess(emptyToUndefined, z.string().min(32).optional()),
  /** pino log level. Default info. */
  LOG_LEVEL: z.enum(LOG_LEVELS).default('info'),
  /** `production` switches off the pretty log transport. */
  NODE_ENV: z.string().default('development'),
});

/** The parsed configuration. */
export type Config = z.infer<typeof configSchema>;

/** Thrown when the environment does not parse; names each variable at fault. */
export class ConfigError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ConfigError';
  }
}

/** Parse an environment (default `process.env`) into a Config, or throw ConfigError naming the variables. */
export function loadConfig(env: Record<string, string | undefined> = process.env): Config {
  const parsed = configSchema.safeParse(env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new ConfigError(`invalid environment:\n${lines.join('\n')}`);
  }
  return parsed.data;
}
