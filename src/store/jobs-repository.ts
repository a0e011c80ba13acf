/**
 * Fit jobs as the user sees them: state, stage, percent, error, attempts. The queue moves
 * the work; this table is the record, so history survives Redis restarts and every read
 * is scoped by workspace.
 */
import type { Db } from './db.js';
import { UUID, isoOrNull } from './column-values.js';


export type JobState = 'queued' | 'running' | 'succeeded' | 'failed' | 'cancelled';
export type JobTrigger = 'create' | 'manual' | 'schedule';

export interface JobRow {
  id: string;
  workspaceId: string;
  modelId: string | null;
  kind: 'fit';
  trigger: JobTrigger;
  state: JobState;
  stage: string;
  percent: number;
  message: string;
  error: string | null;
  attempts: number;
  replicatesTotal: number;
  replicatesDone: number;
  versionId: string | null;
  cancelRequested: boolean;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
}

interface RawJob {
  id: string;
  workspace_id: string;
  model_id: string | null;
  kind: 'fit';
  trigger: JobTrigger;
  state: JobState;
  stage: string;
  percent: number;
  message: string;
  error: string | null;
  attempts: number;
  replicates_total: number;
  replicates_done: number;
  version_id: string | null;
  cancel_requested: boolean;
  created_at: unknown;
  started_at: unknown;
  finished_at: unknown;
}

const toJob = (r: RawJob): JobRow => ({
  id: r.id,
  workspaceId: r.workspace_id,
  modelId: r.model_id,
  kind: r.kind,
  trigger: r.trigger,
  state: r.state,
  stage: r.stage,
  percent: Number(r.percent),
  message: r.message,
  error: r.error,
  attempts: r.attempts,
  replicatesTotal: r.replicates_total,
  replicatesDone: r.replicates_done,
  versionId: r.version_id,
  cancelRequested: r.cancel_requested,
  createdAt: isoOrNull(r.created_at)!,
  startedAt: isoOrNull(r.started_at),
  finishedAt: isoOrNull(r.finished_at),
});

const FINAL = "('succeeded', 'failed', 'cancelled')";

/** A write refused because the job was cancelled meanwhile. */
export class CancelledJobError extends Error {
  constructor(readonly jobId: string) {
    super(`job ${jobId} was cancelled`);
    this.name = 'CancelledJobError';
  }
}

export function createJobsRepository(db: Db) {
  return {
    async insert(j: { id: string; workspaceId: string; modelId: string; trigger: JobTrigger; replicatesTotal: number }, tx: Db = db): Promise<void> {
      await tx.query(
        `INSERT INTO jobs (id, workspace_id, model_id, kind, trigger, state, replicates_total) VALUES ($1, $2, $3, 'fit', $4, 'queued', $5)`,
        [j.id, j.workspaceId, j.modelId, j.trigger, j.replicatesTotal],
      );
    },

    async find(workspaceId: string, id: string, tx: Db = db): Promise<JobRow | null> {
      if (!UUID.test(id)) return null;
      const r = await tx.query<RawJob>('SELECT * FROM jobs WHERE id = $1 AND workspace_id = $2', [id, workspaceId]);
      return r.rows[0] ? toJob(r.rows[0]) : null;
    },

    /** For workers, which act on a job they were handed (no workspace in hand yet). */
    async findById(id: string, tx: Db = db): Promise<JobRow | null> {
      const r = await tx.query<RawJob>('SELECT * FROM jobs WHERE id = $1', [id]);
      return r.rows[0] ? toJob(r.rows[0]) : null;
    },

    async list(workspaceId: string, filter: { modelId?: string; limit?: number } = {}, tx: Db = db): Promise<JobRow[]> {
      const limit = Math.min(Math.max(filter.limit ?? 50, 1), 500);
      if (filter.modelId !== undefined) {
        if (!UUID.test(filter.modelId)) return [];
        const r = await tx.query<RawJob>(
          'SELECT * FROM jobs WHERE workspace_id = $1 AND model_id = $2 ORDER BY created_at DESC, id LIMIT $3',
          [workspaceId, filter.modelId, limit],
        );
        return r.rows.map(toJob);
      }
      const r = await tx.query<RawJob>('SELECT * FROM jobs WHERE workspace_id = $1 ORDER BY created_at DESC, id LIMIT $2', [workspaceId, limit]);
      return r.rows.map(toJob);
    },

    /** Marks a try as started (a retry counts again); final jobs are left alone. */
    async markRunning(id: string, attempt: number, tx: Db = db): Promise<void> {
      await tx.query(
        `UPDATE jobs SET state = 'running', attempts = $2, started_at = COALESCE(started_at, now()), error = NULL WHERE id = $1 AND state NOT IN ${FINAL}`,
        [id, attempt],
      );
    },

    async progress(id: string, p: { stage: string; percent: number; message?: string }, tx: Db = db): Promise<void> {
      await tx.query(`UPDATE jobs SET stage = $2, percent = $3, message = $4 WHERE id = $1 AND state NOT IN ${FINAL}`, [
        id,
        p.stage,
        p.percent,
        p.message ?? '',
      ]);
    },

    /** One more replicate finished (children may run on other machines). Returns the new count. */
    async replicateDone(id: string, tx: Db = db): Promise<{ done: number; total: number }> {
      const r = await tx.query<{ replicates_done: number; replicates_total: number }>(
        'UPDATE jobs SET replicates_done = LEAST(replicates_done + 1, replicates_total) WHERE id = $1 RETURNING replicates_done, replicates_total',
        [id],
      );
      const row = r.rows[0];
      return { done: row?.replicates_done ?? 0, total: row?.replicates_total ?? 0 };
    },

    async succeed(id: string, versionId: string, tx: Db = db): Promise<void> {
      await tx.query(
        `UPDATE jobs SET state = 'succeeded', stage = 'done', percent = 100, version_id = $2, finished_at = now(), error = NULL WHERE id = $1`,
        [id, versionId],
      );
    },

    /** A try failed: `final` when no retry follows. */
    async fail(id: string, error: string, final: boolean, tx: Db = db): Promise<void> {
      await tx.query(
        `UPDATE jobs SET error = $2, state = CASE WHEN $3::boolean THEN 'failed' ELSE state END,
           finished_at = CASE WHEN $3::boolean THEN now() ELSE finished_at END
         WHERE id = $1 AND state NOT IN ${FINAL}`,
        [id, error, final],
      );
    },

    async requestCancel(workspaceId: string, id: string, tx: Db = db): Promise<JobRow | null> {
      if (!UUID.test(id)) return null;
      const r = await tx.query<RawJob>(
        `UPDATE jobs SET cancel_requested = true WHERE id = $1 AND workspace_id = $2 RETURNING *`,
        [id, workspaceId],
      );
      return r.rows[0] ? toJob(r.rows[0]) : null;
    },

    async markCancelled(id: string, tx: Db = db): Promise<void> {
      await tx.query(`UPDATE jobs SET state = 'cancelled', finished_at = now() WHERE id = $1 AND state NOT IN ${FINAL}`, [id]);
    },

    /** Remove a job record that never reached the queue. */
    async remove(id: string, tx: Db = db): Promise<void> {
      await tx.query(`DELETE FROM jobs WHERE id = $1 AND state = 'queued'`, [id]);
    },

    /** Jobs left queued or running (an embedded process that restarted re-enqueues them). */
    async unfinished(tx: Db = db): Promise<JobRow[]> {
      const r = await tx.query<RawJob>(`SELECT * FROM jobs WHERE state IN ('queued', 'running') ORDER BY created_at`);
      return r.rows.map(toJob);
    },
  };
}

export type JobsRepository = ReturnType<typeof createJobsRepository>;
