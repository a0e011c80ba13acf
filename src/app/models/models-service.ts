/**
 * The model use cases the api and the worker share: models, versions, graphs, jobs and
 * refit schedules. Every method is scoped by workspace; another workspace's objects are
 * "not found", never "forbidden".
 */
import { CronExpressionParser } from 'cron-parser';
import type { VersionGraph } from '../../jobs/compute-tasks.js';
import { modelError } from '../../errors/model-errors.js';
import type { QueuePort } from '../../jobs/queue-port.js';
import type { Db } from '../../store/db.js';
import { createDatasetsRepository } from '../../store/datasets-repository.js';
import { createJobsRepository, type JobRow } from '../../store/jobs-repository.js';
import { createModelsRepository, type ModelRow, type VersionMeta } from '../../store/models-repository.js';
import { createSchedulesRepository, type ScheduleRow } from '../../store/schedules-repository.js';
import { createModel, refitModel, type ModelsDeps, type ModelSpecInput } from './create-model.js';
import { diffGraphs, graphToDot, type GraphDiff } from './graph-views.js';
import type { ModelSpec } from './model-spec.js';

/** Job name of a schedule's tick; its handler starts a refit. */
export const REFIT_TICK_JOB = 'refit-tick';
export interface RefitTickData {
  workspaceId: string;
  modelId: string;
}
const scheduleId = (modelId: string) => `refit-${modelId}`;

export function createModelsService(db: Db, queue: QueuePort) {
  const deps: ModelsDeps = {
    db,
    queue,
    models: createModelsRepository(db),
    jobs: createJobsRepository(db),
    datasets: createDatasetsRepository(db),
  };
  const { models, jobs } = deps;
  const schedules = createSchedulesRepository(db);

  const mustFind = async (workspaceId: string, id: string): Promise<ModelRow> => {
    const m = await models.find(workspaceId, id);
    if (!m) throw modelError('ERR_MODEL_NOT_FOUND', { id });
    return m;
  };

  /** A version by id or number, or the current one when `ref` is undefined or "current". */
  const version = async (workspaceId: string, modelId: string, ref?: string): Promise<VersionMeta> => {
    const m = await mustFind(workspaceId, modelId);
    const want = ref === undefined || ref === 'current' ? m.currentVersionId : ref;
    if (!want) {
      const latest = (await jobs.list(workspaceId, { modelId, limit: 1 }))[0];
      throw modelError('ERR_MODEL_NOT_FITTED', { id: modelId, job: latest?.id ?? 'none' });
    }
    const v = await models.findVersion(workspaceId, modelId, want);
    if (!v) throw modelError('ERR_MODEL_VERSION_NOT_FOUND', { id: modelId, version: ref });
    return v;
  };

  const service = {
    deps,

    create(workspaceId: string, input: ModelSpecInput): Promise<{ model: ModelRow; job: JobRow }> {
      return createModel(deps, workspaceId, input);
    },
    list: (workspaceId: string) => models.list(workspaceId),
    get: mustFind,

    async remove(workspaceId: string, id: string): Promise<void> {
      await mustFind(workspaceId, id);
      // Stop running fits and the schedule first, so nothing writes into a deleted model.
      for (const j of await jobs.list(workspaceId, { modelId: id, limit: 500 })) {
        if (j.state === 'queued' || j.state === 'running') await service.cancelJob(workspaceId, j.id).catch(() => {});
      }
      await queue.removeSchedule(scheduleId(id)).catch(() => false);
      await models.remove(workspaceId, id);
    },

    async refit(workspaceId: string, id: string): Promise<JobRow> {
      return refitModel(deps, await mustFind(workspaceId, id), 'manual');
    },

    async listVersions(workspaceId: string, modelId: string): Promise<VersionMeta[]> {
      await mustFind(workspaceId, modelId);
      return models.listVersions(workspaceId, modelId);
    },
    version,

    async graphDot(workspaceId: string, modelId: string, ref?: string): Promise<string> {
      const m = await mustFind(workspaceId, modelId);
      const v = await version(workspaceId, modelId, ref);
      const spec = m.spec as ModelSpec;
      return graphToDot(v.graph as VersionGraph, `${m.name} v${v.number}`, { treatment: spec.treatment, outcome: spec.outcome });
    },

    async diff(workspaceId: string, modelId: string, fromRef: string, toRef: string): Promise<GraphDiff & { from: number; to: number }> {
      const a = await version(workspaceId, modelId, fromRef);
      const b = await version(workspaceId, modelId, toRef);
      return { from: a.number, to: b.number, ...diffGraphs(a.graph as VersionGraph, b.graph as VersionGraph) };
    },

    async job(workspaceId: string, id: string): Promise<JobRow> {
      const j = await jobs.find(workspaceId, id);
      if (!j) throw modelError('ERR_JOB_NOT_FOUND', { id });
      return j;
    },
    listJobs: (workspaceId: string, filter: { modelId?: string; limit?: number }) => jobs.list(workspaceId, filter),

    /** Cancel a queued or running fit: its queue jobs are removed or aborted; no version is written. */
    async cancelJob(workspaceId: string, id: string): Promise<JobRow> {
      const j = await service.job(workspaceId, id);
      if (j.state !== 'queued' && j.state !== 'running') throw modelError('ERR_JOB_FINISHED', { id, state: j.state });
      await jobs.requestCancel(workspaceId, id);
      await jobs.markCancelled(id);
      // The fit's queue jobs: the start job, and the finish job with its replicate children.
      await queue.cancel(id).catch(() => false);
      await queue.cancel(`${id}-finish`).catch(() => false);
      return service.job(workspaceId, id);
    },

    async putSchedule(workspaceId: string, modelId: string, cron: string, tz: string): Promise<ScheduleRow> {
      await mustFind(workspaceId, modelId);
      try {
        if (cron.trim().split(/\s+/).length !== 5) throw new Error('expected exactly five fields');
        CronExpressionParser.parse(cron, { tz });
        new Intl.DateTimeFormat('en', { timeZone: tz });
      } catch (e) {
        throw modelError('ERR_SCHEDULE_INVALID', { cron, tz, reason: e instanceof Error ? e.message : String(e) });
      }
      try {
        await queue.upsertSchedule<RefitTickData>(scheduleId(modelId), { cron, tz }, { name: REFIT_TICK_JOB, data: { workspaceId, modelId } });
      } catch {
        throw modelError('ERR_QUEUE_UNAVAILABLE');
      }
      return schedules.upsert({ modelId, workspaceId, cron, tz });
    },

    async getSchedule(workspaceId: string, modelId: string): Promise<ScheduleRow & { next: string }> {
      await mustFind(workspaceId, modelId);
      const s = await schedules.find(workspaceId, modelId);
      if (!s) throw modelError('ERR_SCHEDULE_NOT_FOUND', { id: modelId });
      const next = CronExpressionParser.parse(s.cron, { tz: s.tz }).next().toDate().toISOString();
      return { ...s, next };
    },

    async removeSchedule(workspaceId: string, modelId: string): Promise<void> {
      await mustFind(workspaceId, modelId);
      if (!(await schedules.find(workspaceId, modelId))) throw modelError('ERR_SCHEDULE_NOT_FOUND', { id: modelId });
      try {
        await queue.removeSchedule(scheduleId(modelId));
      } catch {
        throw modelError('ERR_QUEUE_UNAVAILABLE');
      }
      await schedules.remove(workspaceId, modelId);
    },

    /** Register the refit-tick handler, and (re)register every stored schedule with the queue. */
    async startScheduling(): Promise<void> {
      queue.handle<RefitTickData, string>(REFIT_TICK_JOB, async (run) => {
        const m = await models.find(run.data.workspaceId, run.data.modelId);
        if (!m) return 'model gone';
        const job = await refitModel(deps, m, 'schedule');
        return job.id;
      });
      for (const s of await schedules.all()) {
        await queue.upsertSchedule<RefitTickData>(scheduleId(s.modelId), { cron: s.cron, tz: s.tz }, { name: REFIT_TICK_JOB, data: { workspaceId: s.workspaceId, modelId: s.modelId } });
      }
    },
  };
  return service;
}

export type ModelsService = ReturnType<typeof createModelsService>;
