/**
 * Command-line entry points: `serve` (HTTP api), `migrate` (apply SQL migrations), and the
 * places where `worker` (fit jobs) and `demo` (the Kestrel Valley walk-through) plug in.
 *
 *   tsx src/main.ts serve | migrate | worker | demo
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

/** `serve`: migrate, create the first workspace on an empty database, listen, shut down on SIGTERM/SIGINT. */
async function serve(config: Config): Promise<void> {
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

  const app = await buildApp({ config, db, logger: loggerOptions(config, Boolean(process.stdout.isTTY)) });
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
      await db.close();
      process.exit(0);
    } catch (err) {
      app.log.error({ err }, 'error during shutdown');
      process.exit(1);
    }
  };
  process.on('SIGTERM', () => void shutdown('SIGTERM'));
  process.on('SIGINT', () => void shutdown('SIGINT'));

  try {
    await app.listen({ port: config.PORT, host: config.HOST });
  } catch (err) {
    app.log.error({ err }, 'could not listen');
    await db.close();
    process.exit(1);
  }
  app.log.info({ backend: db.kind, redis: Boolean(config.REDIS_URL) }, `Fulcrum serving on ${describeBackend(config)}; API docs at /docs`);
}

/** Commands that a later part of the service provides; each prints where it stands. */
const LATER: Record<string, string> = {
  worker:
    'The fit worker is not available yet in this version: datasets can be uploaded and inspected, fitting models comes with a later release.',
  demo: 'The Kestrel Valley demo is not available yet in this version: it arrives together with model fitting.',
};

const USAGE = 'usage: tsx src/main.ts <serve|migrate|worker|demo>';

async function main(argv: readonly string[]): Promise<number> {
  const command = argv[0] ?? 'serve';
  if (command === '--help' || command === '-h' || command === 'help') {
    console.log(USAGE);
    return 0;
  }
  if (command in LATER) {
    console.error(LATER[command]);
    return 2;
  }
  if (command !== 'serve' && command !== 'migrate') {
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
  if (command === 'migrate') {
    await migrate(config);
    return 0;
  }
  await serve(config);
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
