/**
 * One set of model use cases per process: the app uses the ModelsService it is given (the one
 * `serve` also hands to the fit runtime), takes its queue, leaves that queue open on close
 * (its owner closes it), and refuses a service built over another queue.
 */
import { cp, mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildApp } from '../../src/api/app.js';
import { createModelsService } from '../../src/app/models/models-service.js';
import { loadConfig } from '../../src/config.js';
import { createInProcessQueue } from '../../src/jobs/in-process-queue.js';
import type { QueuePort } from '../../src/jobs/queue-port.js';
import type { Db } from '../../src/store/db.js';
import { openDb } from '../../src/store/open-db.js';
import { pgliteTemplate } from './helpers/test-app.js';

describe('building the app around a given ModelsService', () => {
  let dir: string;
  let db: Db;
  const config = loadConfig({ LOG_LEVEL: 'silent', FULCRUM_RATE_LIMIT_MAX: '0' });

  /** An in-process queue that counts its close() calls. */
  const countingQueue = (): QueuePort & { closes: number } => {
    const inner = createInProcessQueue();
    const q = { ...inner, closes: 0 };
    q.close = async () => {
      q.closes++;
      await inner.close();
    };
    return q;
  };

  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'fulcrum-compose-'));
    await cp(await pgliteTemplate(), dir, { recursive: true });
    db = await openDb({ dataDir: dir });
  });
  afterAll(async () => {
    await db?.close();
    if (dir) await rm(dir, { recursive: true, force: true });
  });

  it('serves with the given service and its queue, and leaves the queue to its owner', async () => {
    const queue = countingQueue();
    const models = createModelsService(db, queue);
    const app = await buildApp({ config, db, models, logger: false, redis: null });
    expect(app.models).toBe(models);
    expect(app.queue).toBe(queue);
    await app.close();
    expect(queue.closes).toBe(0);
    await queue.close();
  });

  it('closes a queue it made itself', async () => {
    const app = await buildApp({ config, db, logger: false, redis: null });
    const queue = app.queue;
    let closes = 0;
    const close = queue.close.bind(queue);
    queue.close = async () => {
      closes++;
      await close();
    };
    await app.close();
    expect(closes).toBe(1);
  });

  it('refuses a service built over another queue than the one it is given', async () => {
    const a = countingQueue();
    const b = countingQueue();
    await expect(buildApp({ config, db, queue: a, models: createModelsService(db, b), logger: false, redis: null })).rejects.toThrow(/same database and queue/);
    await a.close();
    await b.close();
  });
});
