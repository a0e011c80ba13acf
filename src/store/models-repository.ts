/**
 * Models and their versions. Every read is scoped by workspace: another workspace's model
 * is simply not found.
 */
import type { Db } from './db.js';
import { CancelledJobError } from './jobs-repository.js';
import { UUID, iso } from './column-values.js';


export interface ModelRow {
  id: string;
  workspaceId: string;
  datasetId: string;
  name: string;
  spec: unknown;
  currentVersionId: string | null;
  createdAt: string;
  updatedAt: string;
}

/** A version without its artifact bytes (listing and showing). */
export interface VersionMeta {
  id: string;
  modelId: string;
  number: number;
  jobId: string;
  spec: unknown;
  datasetBatches: number[];
  rowCount: number;
  graph: unknown;
  diagnostics: unknown;
  timings: unknown;
  createdAt: string;
}

export interface NewVersion {
  id: string;
  modelId: string;
  workspaceId: string;
  jobId: string;
  spec: unknown;
  datasetBatches: readonly number[];
  rowCount: number;
  graph: unknown;
  diagnostics: unknown;
  timings: unknown;
  artifact: Uint8Array;
}

interface RawModel {
  id: string;
  workspace_id: string;
  dataset_id: string;
  name: string;
  spec: unknown;
  current_version_id: string | null;
  created_at: unknown;
  updated_at: unknown;
}

const toModel = (r: RawModel): ModelRow => ({
  id: r.id,
  workspaceId: r.workspace_id,
  datasetId: r.dataset_id,
  name: r.name,
  spec: r.spec,
  currentVersionId: r.current_version_id,
  createdAt: iso(r.created_at),
  updatedAt: iso(r.updated_at),
});

interface RawVersion {
  id: string;
  model_id: string;
  number: number;
  job_id: string;
  spec: unknown;
  dataset_batches: number[];
  row_count: number | string;
  graph: unknown;
  diagnostics: unknown;
  timings: unknown;
  created_at: unknown;
}

const toVersion = (r: RawVersion): VersionMeta => ({
  id: r.id,
  modelId: r.model_id,
  number: r.number,
  jobId: r.job_id,
  spec: r.spec,
  datasetBatches: r.dataset_batches.map(Number),
  rowCount: Number(r.row_count),
  graph: r.graph,
  diagnostics: r.diagnostics,
  timings: r.timings,
  createdAt: iso(r.created_at),
});

const VERSION_META = 'id, model_id, number, job_id, spec, dataset_batches, row_count, graph, diagnostics, timings, created_at';

export function createModelsRepository(db: Db) {
  return {
    async insert(m: { id: string; workspaceId: string; datasetId: string; name: string; spec: unknown }, tx: Db = db): Promise<void> {
      await tx.query('INSERT INTO models (id, workspace_id, dataset_id, name, spec) VALUES ($1, $2, $3, $4, $5)', [
        m.id,
        m.workspaceId,
        m.datasetId,
        m.name,
        JSON.stringify(m.spec),
      ]);
    },

    async find(workspaceId: string, id: string, tx: Db = db): Promise<ModelRow | null> {
      if (!UUID.test(id)) return null;
      const r = await tx.query<RawModel>('SELECT * FROM models WHERE id = $1 AND workspace_id = $2', [id, workspaceId]);
      return r.rows[0] ? toModel(r.rows[0]) : null;
    },

    async list(workspaceId: string, tx: Db = db): Promise<ModelRow[]> {
      const r = await tx.query<RawModel>('SELECT * FROM models WHERE workspace_id = $1 ORDER BY created_at, id', [workspaceId]);
      return r.rows.map(toModel);
    },

    async remove(workspaceId: string, id: string, tx: Db = db): Promise<boolean> {
      if (!UUID.test(id)) return false;
      const r = await tx.query('DELETE FROM models WHERE id = $1 AND workspace_id = $2', [id, workspaceId]);
      return r.rowCount > 0;
    },

    /**
     * Write a version and make it current, in one transaction. Idempotent per job: a
     * retried job whose version was already committed gets that version back.
     */
    async commitVersion(v: NewVersion): Promise<{ id: string; number: number; created: boolean }> {
      return db.transaction(async (tx) => {
        // Serialise writers of one model, so version numbers never collide.
        const locked = await tx.query<{ id: string }>('SELECT id FROM models WHERE id = $1 FOR UPDATE', [v.modelId]);
        if (locked.rows.length === 0) throw new RangeError(`model ${v.modelId} no longer exists`);
        const existing = await tx.query<{ id: string; number: number }>('SELECT id, number FROM model_versions WHERE job_id = $1', [v.jobId]);
        if (existing.rows[0]) return { ...existing.rows[0], created: false };
        const job = await tx.query<{ state: string; cancel_requested: boolean }>('SELECT state, cancel_requested FROM jobs WHERE id = $1 FOR UPDATE', [v.jobId]);
        if (job.rows[0] && (job.rows[0].state === 'cancelled' || job.rows[0].cancel_requested)) throw new CancelledJobError(v.jobId);
        const next = await tx.query<{ n: number }>('SELECT COALESCE(MAX(number), 0) + 1 AS n FROM model_versions WHERE model_id = $1', [v.modelId]);
        const number = Number(next.rows[0].n);
        await tx.query(
          `INSERT INTO model_versions (id, model_id, workspace_id, number, job_id, spec, dataset_batches, row_count, graph, diagnostics, timings, artifact)
           VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12)`,
          [
            v.id,
            v.modelId,
            v.workspaceId,
            number,
            v.jobId,
            JSON.stringify(v.spec),
            [...v.datasetBatches],
            v.rowCount,
            JSON.stringify(v.graph),
            JSON.stringify(v.diagnostics),
            JSON.stringify(v.timings),
            v.artifact,
          ],
        );
        await tx.query('UPDATE models SET current_version_id = $2, updated_at = now() WHERE id = $1', [v.modelId, v.id]);
        await tx.query(
          `UPDATE jobs SET state = 'succeeded', stage = 'done', percent = 100, version_id = $2, finished_at = now(), error = NULL WHERE id = $1`,
          [v.jobId, v.id],
        );
        return { id: v.id, number, created: true };
      });
    },

    async listVersions(workspaceId: string, modelId: string, tx: Db = db): Promise<VersionMeta[]> {
      if (!UUID.test(modelId)) return [];
      const r = await tx.query<RawVersion>(
        `SELECT ${VERSION_META} FROM model_versions WHERE model_id = $1 AND workspace_id = $2 ORDER BY number`,
        [modelId, workspaceId],
      );
      return r.rows.map(toVersion);
    },

    /** A version by id, or by number when `ref` is a positive integer. */
    async findVersion(workspaceId: string, modelId: string, ref: string, tx: Db = db): Promise<VersionMeta | null> {
      if (!UUID.test(modelId)) return null;
      const byNumber = /^[1-9][0-9]{0,8}$/.test(ref);
      if (!byNumber && !UUID.test(ref)) return null;
      const r = await tx.query<RawVersion>(
        `SELECT ${VERSION_META} FROM model_versions WHERE model_id = $1 AND workspace_id = $2 AND ${byNumber ? 'number = $3::int' : 'id = $3::uuid'}`,
        [modelId, workspaceId, ref],
      );
      return r.rows[0] ? toVersion(r.rows[0]) : null;
    },

    async artifact(workspaceId: string, versionId: string, tx: Db = db): Promise<Uint8Array | null> {
      if (!UUID.test(versionId)) return null;
      const r = await tx.query<{ artifact: Uint8Array }>('SELECT artifact FROM model_versions WHERE id = $1 AND workspace_id = $2', [versionId, workspaceId]);
      return r.rows[0] ? new Uint8Array(r.rows[0].artifact) : null;
    },
  };
}

export type ModelsRepository = ReturnType<typeof createModelsRepository>;
