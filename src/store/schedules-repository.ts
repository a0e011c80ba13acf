/** Refit schedules, one per model; scoped by workspace. */
import type { Db } from './db.js';
import { UUID, iso } from './column-values.js';


export interface ScheduleRow {
  modelId: string;
  workspaceId: string;
  cron: string;
  tz: string;
  createdAt: string;
  updatedAt: string;
}

interface RawSchedule {
  model_id: string;
  workspace_id: string;
  cron: string;
  tz: string;
  created_at: unknown;
  updated_at: unknown;
}

const toSchedule = (r: RawSchedule): ScheduleRow => ({
  modelId: r.model_id,
  workspaceId: r.workspace_id,
  cron: r.cron,
  tz: r.tz,
  createdAt: iso(r.created_at),
  updatedAt: iso(r.updated_at),
});

export function createSchedulesRepository(db: Db) {
  return {
    async upsert(s: { modelId: string; workspaceId: string; cron: string; tz: string }, tx: Db = db): Promise<ScheduleRow> {
      const r = await tx.query<RawSchedule>(
        `INSERT INTO model_schedules (model_id, workspace_id, cron, tz) VALUES ($1, $2, $3, $4)
         ON CONFLICT (model_id) DO UPDATE SET cron = EXCLUDED.cron, tz = EXCLUDED.tz, updated_at = now()
         RETURNING *`,
        [s.modelId, s.workspaceId, s.cron, s.tz],
      );
      return toSchedule(r.rows[0]);
    },

    async find(workspaceId: string, modelId: string, tx: Db = db): Promise<ScheduleRow | null> {
      if (!UUID.test(modelId)) return null;
      const r = await tx.query<RawSchedule>('SELECT * FROM model_schedules WHERE model_id = $1 AND workspace_id = $2', [modelId, workspaceId]);
      return r.rows[0] ? toSchedule(r.rows[0]) : null;
    },

    async remove(workspaceId: string, modelId: string, tx: Db = db): Promise<boolean> {
      if (!UUID.test(modelId)) return false;
      const r = await tx.query('DELETE FROM model_schedules WHERE model_id = $1 AND workspace_id = $2', [modelId, workspaceId]);
      return r.rowCount > 0;
    },

    /** Every schedule (registered with the queue when an embedded process starts). */
    async all(tx: Db = db): Promise<ScheduleRow[]> {
      const r = await tx.query<RawSchedule>('SELECT * FROM model_schedules ORDER BY created_at');
      return r.rows.map(toSchedule);
    },
  };
}

export type SchedulesRepository = ReturnType<typeof createSchedulesRepository>;
