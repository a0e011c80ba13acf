/**
 * The app for the browser test: buildApp on a fresh PGlite copy with an in-process queue that
 * runs the fit handlers (inline compute). Whatever buildApp does not mount yet — the models,
 * jobs and effect routes on older builds, the report routes until they are wired — is
 * composed here the way the service composes it; what it mounts is used as it is.
 */
import { cp, mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { FastifyInstance } from 'fastify';
import { buildApp } from '../../src/api/app.js';
import { installAuth } from '../../src/api/plugins/auth.js';
import { createAuthCache } from '../../src/app/keys/auth-cache.js';
import { effectsRoutes } from '../../src/api/routes/effects-routes.js';
import { jobsRoutes } from '../../src/api/routes/jobs-routes.js';
import { modelsRoutes } from '../../src/api/routes/models-routes.js';
import { reportLinkRoutes, reportPageRoutes } from '../../src/api/routes/report-routes.js';
import { createDatasetsService } from '../../src/app/datasets/datasets-service.js';
import { createKey, createWorkspaceWithAdminKey } from '../../src/app/keys/key-use-cases.js';
import type { Scope } from '../../src/app/keys/key-secret.js';
import { createFitFrames } from '../../src/app/models/fit-frames.js';
import { registerFitHandlers } from '../../src/app/models/fit-handlers.js';
import { createModelsService, type ModelsService } from '../../src/app/models/models-service.js';
import { createQueriesService, type QueriesService } from '../../src/app/queries/queries-service.js';
import { loadConfig } from '../../src/config.js';
import { createDemoClient } from '../../src/demo/demo-client.js';
import { createInProcessQueue } from '../../src/jobs/in-process-queue.js';
import { createJobsRepository } from '../../src/store/jobs-repository.js';
import { createKeysRepository } from '../../src/store/keys-repository.js';
import { createModelsRepository } from '../../src/store/models-repository.js';
import { openDb } from '../../src/store/open-db.js';
import { createWorkspacesRepository } from '../../src/store/workspaces-repository.js';
import { pgliteTemplate } from '../api/helpers/test-app.js';

export const LINK_SECRET = 'browser-test-link-secret-0123456789';

export interface ReportApp {
  app: FastifyInstance;
  adminKey: string;
  key(scopes: Scope[]): Promise<string>;
  client: typeof createDemoClient;
  close(): Promise<void>;
}

export async function startReportApp(): Promise<ReportApp> {
  const dir = await mkdtemp(join(tmpdir(), 'fulcrum-browser-'));
  await cp(await pgliteTemplate(), dir, { recursive: true });
  const db = await openDb({ dataDir: dir });
  const config = loadConfig({ LOG_LEVEL: 'silent', FULCRUM_RATE_LIMIT_MAX: '0', FULCRUM_LINK_SECRET: LINK_SECRET });
  // Our queue, with the fit handlers on it (inline compute: no worker threads under vitest).
  const queue = createInProcessQueue({ concurrency: 2 });
  registerFitHandlers({ queue, models: createModelsRepository(db), jobs: createJobsRepository(db), frames: createFitFrames(createDatasetsService(db)), inlineCompute: true });
  await queue.startWorkers();
  // `queue` is a buildApp option from the commit that mounts the models routes on; older builds ignore it.
  const app = await buildApp({ config, db, redis: null, logger: false, ...({ queue } as object) } as Parameters<typeof buildApp>[0]);
  const keysDeps = { db, keys: createKeysRepository(db), workspaces: createWorkspacesRepository(db) };
  const decorated = app as unknown as { models?: ModelsService; queries?: QueriesService };
  const hasModels = app.hasRoute({ method: 'POST', url: '/v1/models' });
  const models = hasModels && decorated.models ? decorated.models : createModelsService(db, queue);
  const queries = hasModels && decorated.queries ? decorated.queries : createQueriesService(models);
  const hasReports = app.hasRoute({ method: 'POST', url: '/v1/models/:id/versions/:version/report-links' });
  if (!hasModels || !hasReports) {
    const opts = { models, queries, secret: LINK_SECRET };
    await app.register(
      async (v1) => {
        installAuth(v1, createAuthCache(keysDeps.keys));
        if (!hasModels) {
          await v1.register(modelsRoutes, { models });
          await v1.register(jobsRoutes, { models });
          await v1.register(effectsRoutes, { queries });
        }
        if (!hasReports) await v1.register(reportLinkRoutes, opts);
      },
      { prefix: '/v1' },
    );
    if (!hasReports) await app.register(reportPageRoutes, opts);
  }
  await app.ready();
  const ws = await createWorkspaceWithAdminKey(keysDeps, 'browser');
  return {
    app,
    adminKey: ws.adminKey.key,
    key: async (scopes) => (await createKey(keysDeps, ws.workspaceId, { name: 'report reader', scopes })).key,
    client: createDemoClient,
    async close() {
      await app.close();
      await queue.close();
      await db.close();
      await rm(dir, { recursive: true, force: true });
    },
  };
}
