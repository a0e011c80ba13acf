/**
 * Models, versions, jobs and schedules repositories on both back ends: PGlite always,
 * PostgreSQL when DATABASE_URL is set. Checks the guarantees the fit pipeline relies on.
 */
import { randomUUID } from 'node:crypto';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Db } from '../../src/store/db.js';
import { createJobsRepository } from '../../src/store/jobs-repository.js';
import { runMigrations } from '../../src/store/migrate.js';
import { createModelsRepository } from '../../src/store/models-repository.js';
import { dropSchema, openDb } from '../../src/store/open-db.js';
import { createSchedulesRepository } from '../../src/store/schedules-repository.js';

const backends: string[] = ['pglite', ...(process.env.DATABASE_URL ? ['postgres'] : [])];
console.log(`models/jobs repositories cover: ${backends.join(', ')}`);

describe.each(backends)('models and jobs repositories on %s', (backend) => {
  let db: Db;
  let dir = '';
  const schema = `t_models_${randomUUID().replace(/-/g, '').slice(0, 12)}`;
  const wsA = randomUUID();
  const wsB = randomUUID();
  const datasetId = randomUUID();

  beforeAll(async () => {
    if (backend === 'postgres') db = await openDb({ databaseUrl: process.env.DATABASE_URL, schema });
    else {
      dir = await mkdtemp(join(tmpdir(), 'fulcrum-models-'));
      db = await openDb({ dataDir: dir });
    }
    await runMigrations(db);
    for (const ws of [wsA, wsB]) await db.query('INSERT INTO workspaces (id, name) VALUES ($1, $2)', [ws, 'w']);
    await db.query('INSERT INTO datasets (id, workspace_id, name, table_name) VALUES ($1, $2, $3, $4)', [
      datasetId,
      wsA,
      'households',
      `ds_${datasetId.replace(/-/g, '')}`,
    ]);
  });

  afterAll(async () => {
    if (backend === 'postgres') await dropSchema(db, schema);
    await db.close();
    if (dir) await rm(dir, { recursive: true, force: true });
  });

  const version = (modelId: string, jobId: string) => ({
    id: randomUUID(),
    modelId,
    workspaceId: wsA,
    jobId,
    spec: { learner: 'pc' },
    datasetBatches: [1, 2],
    rowCount: 100,
    graph: { nodes: ['a', 'b'], edges: [] },
    diagnostics: {},
    timings: { totalMs: 1 },
    artifact: new Uint8Array([1, 2, 3, 255]),
  });

  it('numbers versions, moves the current pointer, and keeps artifacts byte for byte', async () => {
    const models = createModelsRepository(db);
    const modelId = randomUUID();
    await models.insert({ id: modelId, workspaceId: wsA, datasetId, name: 'm', spec: { seed: 1 } });
    const v1 = await models.commitVersion(version(modelId, randomUUID()));
    const v2 = await models.commitVersion(version(modelId, randomUUID()));
    expect([v1.number, v2.number]).toEqual([1, 2]);
    expect((await models.find(wsA, modelId))?.currentVersionId).toBe(v2.id);
    expect(Array.from((await models.artifact(wsA, v1.id))!)).toEqual([1, 2, 3, 255]);
    expect((await models.findVersion(wsA, modelId, '1'))?.id).toBe(v1.id);
    expect((await models.listVersions(wsA, modelId)).map((v) => v.datasetBatches)).toEqual([
      [1, 2],
      [1, 2],
    ]);
  });

  it('writes one version per job: a retried job gets the version it already committed', async () => {
    const models = createModelsRepository(db);
    const modelId = randomUUID();
    await models.insert({ id: modelId, workspaceId: wsA, datasetId, name: 'm', spec: {} });
    const job = randomUUID();
    const first = await models.commitVersion(version(modelId, job));
    const again = await models.commitVersion(version(modelId, job));
    expect(again).toEqual({ id: first.id, number: first.number, created: false });
    expect(await models.listVersions(wsA, modelId)).toHaveLength(1);
  });

  it('hides one workspace’s models, versions, jobs and schedules from another', async () => {
    const models = createModelsRepository(db);
    const jobs = createJobsRepository(db);
    const schedules = createSchedulesRepository(db);
    const modelId = randomUUID();
    await models.insert({ id: modelId, workspaceId: wsA, datasetId, name: 'm', spec: {} });
    const v = await models.commitVersion(version(modelId, randomUUID()));
    const jobId = randomUUID();
    await jobs.insert({ id: jobId, workspaceId: wsA, modelId, trigger: 'create', replicatesTotal: 4 });
    await schedules.upsert({ modelId, workspaceId: wsA, cron: '0 2 * * *', tz: 'UTC' });
    expect(await models.find(wsB, modelId)).toBeNull();
    expect(await models.listVersions(wsB, modelId)).toEqual([]);
    expect(await models.findVersion(wsB, modelId, '1')).toBeNull();
    expect(await models.artifact(wsB, v.id)).toBeNull();
    expect(await jobs.find(wsB, jobId)).toBeNull();
    expect(await jobs.requestCancel(wsB, jobId)).toBeNull();
    expect(await schedules.find(wsB, modelId)).toBeNull();
    expect(await schedules.remove(wsB, modelId)).toBe(false);
    expect(await models.remove(wsB, modelId)).toBe(false);
    expect(await models.find(wsA, modelId)).not.toBeNull();
  });

  it('tracks a job through its life and never reopens a finished one', async () => {
    const models = createModelsRepository(db);
    const jobs = createJobsRepository(db);
    const modelId = randomUUID();
    await models.insert({ id: modelId, workspaceId: wsA, datasetId, name: 'm', spec: {} });
    const id = randomUUID();
    await jobs.insert({ id, workspaceId: wsA, modelId, trigger: 'manual', replicatesTotal: 2 });
    await jobs.markRunning(id, 1);
    await jobs.progress(id, { stage: 'learning', percent: 20 });
    expect(await jobs.replicateDone(id)).toEqual({ done: 1, total: 2 });
    expect(await jobs.replicateDone(id)).toEqual({ done: 2, total: 2 });
    expect(await jobs.replicateDone(id)).toEqual({ done: 2, total: 2 });
    await jobs.fail(id, 'worker lost', false);
    expect((await jobs.find(wsA, id))?.state).toBe('running');
    await jobs.fail(id, 'the dataset has no rows', true);
    await jobs.markRunning(id, 2);
    const row = await jobs.find(wsA, id);
    expect(row?.state).toBe('failed');
    expect(row?.error).toBe('the dataset has no rows');
  });

  it('refuses to delete a dataset that still has models', async () => {
    const models = createModelsRepository(db);
    await models.insert({ id: randomUUID(), workspaceId: wsA, datasetId, name: 'm', spec: {} });
    await expect(db.query('DELETE FROM datasets WHERE id = $1', [datasetId])).rejects.toThrow();
    expect((await db.query('SELECT 1 FROM datasets WHERE id = $1', [datasetId])).rowCount).toBe(1);
  });
});
