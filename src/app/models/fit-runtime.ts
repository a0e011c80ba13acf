/**
 * Everything a process needs to run fits on a queue: the fit handlers, the refit-schedule
 * tick handler (and the stored schedules re-registered), and the workers started. Used by
 * `serve` in embedded mode (in-process queue), by `worker` (BullMQ), and by tests.
 */
import { createDatasetsService } from '../datasets/datasets-service.js';
import { createFitFrames } from './fit-frames.js';
import { registerFitHandlers } from './fit-handlers.js';
import { FIT_ATTEMPTS, FIT_BACKOFF_MS, FIT_JOB, fitQueueIds } from './fit-job-data.js';
import type { ModelsService } from './models-service.js';

export interface FitRuntimeOptions {
  /**
   * The model use cases of this process (the api's own in `serve`): fits run on its queue and
   * write through its repositories on its database.
   */
  models: ModelsService;
  /** Jobs this process runs at once (each heavy step takes one compute thread). Default 2. */
  concurrency?: number;
  /** Structured log of job steps. */
  log?: (entry: Record<string, unknown>, msg: string) => void;
  /**
   * Re-enqueue fits left queued or running by a previous run of this process (the
   * in-process queue forgets its jobs on restart; BullMQ keeps them). Default false.
   */
  resumeUnfinished?: boolean;
  /** Run compute in the calling thread (tests on tiny data). Default false. */
  inlineCompute?: boolean;
}

export async function startFitRuntime(opts: FitRuntimeOptions): Promise<void> {
  const { models } = opts;
  const { db, queue } = models.deps;
  registerFitHandlers({
    queue,
    models: models.deps.models,
    jobs: models.deps.jobs,
    frames: createFitFrames(createDatasetsService(db)),
    log: opts.log,
    inlineCompute: opts.inlineCompute,
  });
  await models.startScheduling();
  await queue.startWorkers({ concurrency: opts.concurrency ?? 2 });
  if (opts.resumeUnfinished) {
    for (const job of await models.deps.jobs.unfinished()) {
      if (!job.modelId) continue;
      const model = await models.deps.models.find(job.workspaceId, job.modelId);
      if (!model) continue;
      // The batches it was started on are not stored apart from the queue entry; refitting on
      // the current batches is the honest resumption, and the job row says so.
      const batches = (await models.deps.datasets.batches(model.datasetId)).map((b) => b.batch);
      await models.deps.jobs.progress(job.id, { stage: 'queued', percent: 0, message: 'resumed after a restart' });
      await queue.add({
        name: FIT_JOB.start,
        data: { jobId: job.id, workspaceId: job.workspaceId, modelId: model.id, batches },
        opts: { jobId: fitQueueIds.start(job.id), attempts: FIT_ATTEMPTS, backoffMs: FIT_BACKOFF_MS },
      });
    }
  }
}
