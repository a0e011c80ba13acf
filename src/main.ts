/**
 * Command-line entry points:
 *   serve    the HTTP api; without REDIS_URL it also runs fits in-process (embedded default)
 *   worker   BullMQ fit workers against REDIS_URL (scale out by starting more, anywhere)
 *   migrate  apply pending SQL migrations
 *   demo     serve on the embedded default, run the Kestrel Valley walk-through through the
 *            HTTP API, then keep serving
 *
 *   tsx src/main.ts serve | worker | migrate | demo
 */
import { buildApp } from './api/app.js';
import { loggerOptions } from './api/logger.js';
import { bootstrapWorkspace } from './app/keys/bootstrap.js';
import { ConfigError, loadConfig, type Config } from './config.js';
import type { Db } from './store/db.js';
import { createKeysRepository } from './store/keys-repository.js';
import { runMigrations } from './store/migrate.js';
import { openDb } from './store/open-db.js';
import { createWorkspacesRepository } from './store/workspaces-repository.js';
import { createKey } from './app/keys/key-use-cases.js';
import { startFitRuntime } from './app/models/fit-runtime.js';
import { createModelsService } from './app/models/models-service.js';
import { runDemo } from './demo/run-demo.js';
import { createBullmqQueue } from './jobs/bullmq-queue.js';
import { createInProcessQueue } from './jobs/in-process-queue.js';
import type { QueuePort } from './jobs/queue-port.js';

function describeBackend(config: Config): string {
  return config.DATABASE_URL ? 'PostgreSQL (DATABASE_URL)' : `embedded PostgreSQL (PGlite) in ${config.FULCRUM_DATA_DIR}`;
}

async function openMigrated(config: Config): Promise<{ db: Db; applied: number[] }> {
  const db = await openDb({ databaseUrl: config.DATABASE_URL, dataDir: config.FULCRUM_DATA_DIR });
  try {
    return { db, applied: await runMigrations(db) };
  } catch (err) {
    await db.close();
    throw err;
  }
}

/** `migrate`: apply pending migrations and exit. */
async function migrate(config: Config): Promise<void> {
  const { db, applied } = await openMigrated(config);
  await db.close();
  console.log(
    applied.length > 0
      ? `Applied migrations ${applied.join(', ')} on ${describeBackend(config)}.`
      : `No pending migrations on ${describeBackend(config)}.`,
  );
}

/** BullMQ on REDIS_URL, or the in-process queue of the embedded default. */
function createQueue(config: Config): QueuePort {
  return config.REDIS_URL
    ? createBullmqQueue({ redisUrl: config.REDIS_URL, queueName: config.FULCRUM_QUEUE_NAME, lockDurationMs: config.FULCRUM_JOB_LOCK_MS })
    : createInProcessQueue({ concurrency: config.FULCRUM_WORKER_CONCURRENCY });
}

/** Where `serve` listens, and a key for the demo when it asked for one. */
interface Serving {
  url: string;
  demoKey?: string;
}

/**
 * `serve`: migrate, create the first workspace on an empty database, listen, shut down on
 * SIGTERM/SIGINT. Without REDIS_URL the fits run in this process too.
 */
async function serve(config: Config, options: { demoKey?: boolean } = {}): Promise<Serving> {
  const { db } = await openMigrated(config);
  const deps = { db, keys: createKeysRepository(db), workspaces: createWorkspacesRepository(db) };
  const boot = await bootstrapWorkspace(deps, config.FULCRUM_BOOTSTRAP_KEY);
  if (boot.created && boot.printKey) {
    // Printed once, to the terminal only (never through the request log). It is not stored.
    process.stdout.write(
      [
        '',
        '  Fulcrum created the workspace "default" and its admin key (shown only this once):',
        '',
        `    ${boot.printKey}`,
        '',
        '  Use it as: curl -H "Authorization: Bearer <key>" …   Create narrower keys with POST /v1/keys.',
        '',
      ].join('\n') + '\n',
    );
  } else if (boot.created) {
    process.stdout.write('Fulcrum created the workspace "default" with the admin key from FULCRUM_BOOTSTRAP_KEY.\n');
  }

  let demoKey: string | undefined;
  if (options.demoKey) {
    const ws = boot.workspaceId ?? (await db.query<{ id: string }>('SELECT id FROM workspaces ORDER BY created_at LIMIT 1')).rows[0]?.id;
    if (!ws) throw new Error('no workspace to run the demo in');
    demoKey = (await createKey(deps, ws, { name: 'demo', scopes: ['read', 'write'] })).key;
  }

  const queue = createQueue(config);
  // One set of model use cases for the api and, in embedded mode, the fits of this process.
  const models = createModelsService(db, queue);
  const logger = loggerOptions(config, Boolean(process.stdout.isTTY));
  const app = await buildApp({ config, db, queue, models, logger });
  if (queue.kind === 'in-process') {
    // Embedded default: this process is also the worker; fits left unfinished by a previous run resume.
    await startFitRuntime({
      models,
      concurrency: config.FULCRUM_WORKER_CONCURRENCY,
      resumeUnfinished: true,
      log: (entry, msg) => app.log.info(entry, msg),
    });
  }
  let stopping = false;
  const shutdown = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    app.log.info({ signal }, 'shutting down: draining requests');
    app.beginShutdown();
    const force = setTimeout(() => {
      app.log.error('shutdown took longer than 30 s; exiting');
      process.exit(1);
    }, 30_000);
    force.unref();
    try {
      await app.close();
      await queue.close();
      await db.close();
      process.exit(0);
    } catch (err) {
      app.log.error({ err }, 'error during shutdown');
      process.exit(1);
    }
  };
  process.on('SIGTERM', () => void shutdown('SIGTERM'));
  process.on('SIGINT', () => void shutdown('SIGINT'));

  let url: string;
  try {
    url = await app.listen({ port: config.PORT, host: config.HOST });
  } catch (err) {
    app.log.error({ err }, 'could not listen');
    await queue.close();
    await db.close();
    process.exit(1);
  }
  app.log.info(
    { backend: db.kind, queue: queue.kind },
    `Fulcrum serving on ${describeBackend(config)}; fits run ${queue.kind === 'bullmq' ? 'on BullMQ workers (npm run worker)' : 'in this process'}; API docs at /docs`,
  );
  return { url, demoKey };
}

/** `worker`: BullMQ fit workers on REDIS_URL until SIGTERM/SIGINT. */
async function worker(config: Config): Promise<void> {
  if (!config.REDIS_URL) {
    throw new ConfigError('the worker needs REDIS_URL (BullMQ). Without Redis, `npm start` runs fits in the api process itself.');
  }
  const { db } = await openMigrated(config);
  const queue = createQueue(config);
  const log = (entry: Record<string, unknown>, msg: string) => console.log(JSON.stringify({ time: new Date().toISOString(), msg, ...entry }));
  await startFitRuntime({ models: createModelsService(db, queue), concurrency: config.FULCRUM_WORKER_CONCURRENCY, log });
  log({ queue: config.FULCRUM_QUEUE_NAME, concurrency: config.FULCRUM_WORKER_CONCURRENCY, backend: db.kind }, 'fit worker started');
  let stopping = false;
  const shutdown = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    log({ signal }, 'worker shutting down: finishing or handing back active jobs');
    // A job still running when the timer fires is handed back by its lock expiring, and retried.
    const force = setTimeout(() => process.exit(1), 30_000);
    force.unref();
    await queue.close();
    await db.close();
    process.exit(0);
  };
  process.on('SIGTERM', () => void shutdown('SIGTERM'));
  process.on('SIGINT', () => void shutdown('SIGINT'));
}

/** `demo`: serve, run the walk-through through the HTTP API, keep serving. */
async function demo(config: Config): Promise<void> {
  const { url, demoKey } = await serve(config, { demoKey: true });
  const base = url.replace('0.0.0.0', '127.0.0.1');
  const interactive = Boolean(process.stdout.isTTY);
  const result = await runDemo({
    baseUrl: base,
    key: demoKey!,
    progress: interactive ? (line) => process.stdout.write(`\r${line.padEnd(100)}`) : undefined,
    print: (line) => process.stdout.write(`${interactive ? '\r' : ''}${line}\n`),
  });
  process.stdout.write(
    [
      '',
      `Fulcrum keeps serving at ${base} (API docs at ${base}/docs). Try, with the demo key:`,
      `  curl -s -H "Authorization: Bearer ${demoKey}" ${base}/v1/models/${result.modelId}/versions/current/graph`,
      'Stop it with Ctrl-C.',
      '',
    ].join('\n'),
  );
}

const USAGE = 'usage: tsx src/main.ts <serve|worker|migrate|demo>';
const COMMANDS = ['serve', 'worker', 'migrate', 'demo'];

async function main(argv: readonly string[]): Promise<number> {
  const command = argv[0] ?? 'serve';
  if (command === '--help' || command === '-h' || command === 'help') {
    console.log(USAGE);
    return 0;
  }
  if (!COMMANDS.includes(command)) {
    console.error(`unknown command "${command}"\n${USAGE}`);
    return 2;
  }
  let config: Config;
  try {
    config = loadConfig();
  } catch (err) {
    if (err instanceof ConfigError) {
      console.error(err.message);
      return 2;
    }
    throw err;
  }
  try {
    if (command === 'migrate') {
      await migrate(config);
      return 0;
    }
    if (command === 'worker') await worker(config);
    // The demo's own report is the output; request logs would bury it unless asked for.
    else if (command === 'demo') await demo(process.env.LOG_LEVEL ? config : { ...config, LOG_LEVEL: 'warn' });
    else await serve(config);
  } catch (err) {
    if (err instanceof ConfigError) {
      console.error(err.message);
      return 2;
    }
    throw err;
  }
  return -1; // keep running
}

main(process.argv.slice(2)).then(
  (code) => {
    if (code >= 0) process.exit(code);
  },
  (err: unknown) => {
    console.error(err instanceof Error ? (err.stack ?? err.message) : String(err));
    process.exit(1);
  },
);
