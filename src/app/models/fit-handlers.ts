/**
 * The fit pipeline as queue handlers. One fit (one jobs row) is three kinds of queue job:
 *
 *   fit-start       load the data snapshot, resolve `auto` to one learner for every
 *                   replicate, then enqueue a flow:
 *   fit-replicate×B one bootstrap replicate each, on any worker of any machine
 *   fit-finish      (after all replicates) merge into a weighted DAG set, fit mechanisms,
 *                   compile, and commit the version — in one transaction that also moves
 *                   the model's current pointer and marks the job succeeded.
 *
 * Heavy work runs in compute threads (jobs/compute-pool.ts). Every handler is safe to
 * retry: enqueueing uses fixed ids (a repeat is a no-op), and a version is written at most
 * once per job (model_versions.job_id is unique), so a worker killed at any point leaves
 * no half-written version and the retried job finishes the fit.
 */
import type { FitFrames } from './fit-frames.js';
import { FIT_ATTEMPTS, FIT_BACKOFF_MS, FIT_JOB, fitQueueIds, type FitFinishData, type FitReplicateData, type FitStartData } from './fit-job-data.js';
import type { ModelSpec } from './model-spec.js';
import type { ReplicateOutput } from '../../jobs/compute-tasks.js';
import { runCompute } from '../../jobs/compute-pool.js';
import { JobCancelledError, type JobProgress, type JobRun, type QueuePort } from '../../jobs/queue-port.js';
import { CancelledJobError, type JobRow, type JobsRepository } from '../../store/jobs-repository.js';
import type { ModelsRepository } from '../../store/models-repository.js';
import { optionsFor } from '../../core/discovery/learner-options.js';

export interface FitHandlerDeps {
  queue: QueuePort;
  models: ModelsRepository;
  jobs: JobsRepository;
  frames: FitFrames;
  /** Run compute tasks in this thread (tests of the pipeline on tiny data). Default false. */
  inlineCompute?: boolean;
  /** Structured log of job steps (no data values). */
  log?: (entry: Record<string, unknown>, msg: string) => void;
}

/** Share of the progress bar each stage ends at. */
const PERCENT = { loaded: 5, learned: 80, compiled: 97 };

export function registerFitHandlers(deps: FitHandlerDeps): void {
  const { queue, models, jobs, frames } = deps;
  const log = deps.log ?? (() => {});

  const report = async (run: JobRun<FitStartData>, p: JobProgress): Promise<void> => {
    await jobs.progress(run.data.jobId, p);
    await run.progress(p);
    log({ jobId: run.data.jobId, stage: p.stage, percent: p.percent }, 'fit progress');
  };

  /** The live job and its model's spec, or null when the fit should not go on. */
  const current = async (run: JobRun<FitStartData>): Promise<{ spec: ModelSpec; job: JobRow } | null> => {
    const job = await jobs.findById(run.data.jobId);
    if (!job || job.cancelRequested || job.state === 'cancelled') {
      if (job && job.state !== 'cancelled') await jobs.markCancelled(job.id);
      return null;
    }
    if (job.state === 'succeeded' || job.state === 'failed') return null;
    const model = await models.find(run.data.workspaceId, run.data.modelId);
    if (!model) return null;
    return { spec: model.spec as ModelSpec, job };
  };

  /** Record a failed try; the last try fails the job with a readable reason. */
  const failed = async (run: JobRun<FitStartData>, what: string, err: unknown): Promise<never> => {
    if (run.signal.aborted || err instanceof JobCancelledError || err instanceof CancelledJobError) {
      await jobs.markCancelled(run.data.jobId);
      throw err;
    }
    const message = `${what}: ${err instanceof Error ? err.message : String(err)}`;
    const final = run.attempt >= run.maxAttempts;
    await jobs.fail(run.data.jobId, message, final);
    log({ jobId: run.data.jobId, attempt: run.attempt, final }, `fit step failed: ${what}`);
    throw err;
  };

  const frameOf = (d: FitStartData, spec: ModelSpec) =>
    frames.load({ workspaceId: d.workspaceId, datasetId: spec.datasetId, batches: d.batches, variables: spec.variables });

  queue.handle<FitStartData, { enqueued: string }>(FIT_JOB.start, async (run) => {
    const d = run.data;
    const live = await current(run);
    if (!live) return { enqueued: 'nothing (cancelled or gone)' };
    const { spec } = live;
    try {
      await jobs.markRunning(d.jobId, run.attempt);
      await report(run, { stage: 'loading data', percent: 1 });
      const frame = await frameOf(d, spec);
      const opts = { jobId: fitQueueIds.finish(d.jobId), attempts: FIT_ATTEMPTS, backoffMs: FIT_BACKOFF_MS };
      if (spec.fixedGraph) {
        await queue.add<FitFinishData>({ name: FIT_JOB.finish, data: { ...d, learner: 'fixed', learnerNotes: [] }, opts });
        await report(run, { stage: 'fitting mechanisms', percent: PERCENT.learned, message: 'fixed graph: learning skipped' });
        return { enqueued: 'finish' };
      }
      let learner = spec.learner;
      let learnerNotes: string[] = [];
      if (learner === 'auto') {
        const choice = await runCompute('choose-learner', { frame }, { signal: run.signal, inline: deps.inlineCompute });
        learner = choice.learner;
        learnerNotes = choice.notes;
      }
      const concrete = learner as FitReplicateData['learner'];
      const unused = optionsFor(concrete, spec.learnerOptions).unused;
      // Under auto, options meant for the learners it did not pick; otherwise only a spec stored before options were checked.
      if (unused.length > 0) learnerNotes = [...learnerNotes, `${spec.learner === 'auto' ? 'auto: ' : ''}option(s) ${unused.join(', ')} are not options of ${concrete} and were not used`];
      const children = Array.from({ length: spec.replicates }, (_, k) => ({
        name: FIT_JOB.replicate,
        data: { ...d, learner: concrete, replicateIndex: k } satisfies FitReplicateData,
        opts: { jobId: fitQueueIds.replicate(d.jobId, k), attempts: FIT_ATTEMPTS, backoffMs: FIT_BACKOFF_MS },
      }));
      await queue.addFlow<FitFinishData, FitReplicateData>({ name: FIT_JOB.finish, data: { ...d, learner: concrete, learnerNotes }, opts }, children);
      await report(run, { stage: 'learning graphs', percent: PERCENT.loaded, message: `0 of ${spec.replicates} replicates (${concrete})` });
      return { enqueued: `${spec.replicates} replicates` };
    } catch (err) {
      return failed(run, 'preparing the fit', err);
    }
  });

  queue.handle<FitReplicateData, ReplicateOutput | null>(FIT_JOB.replicate, async (run) => {
    const d = run.data;
    const live = await current(run);
    if (!live) throw new JobCancelledError(d.jobId);
    const { spec } = live;
    try {
      const frame = await frameOf(d, spec);
      const out = await runCompute(
        'replicate',
        {
          frame,
          knowledge: spec.knowledge,
          options: { ...optionsFor(d.learner, spec.learnerOptions).used, learner: d.learner, seed: spec.seed },
          replicateIndex: d.replicateIndex,
          seed: spec.seed,
        },
        { signal: run.signal, inline: deps.inlineCompute },
      );
      const { done, total } = await jobs.replicateDone(d.jobId);
      const percent = PERCENT.loaded + ((PERCENT.learned - PERCENT.loaded) * done) / Math.max(total, 1);
      await report(run, { stage: 'learning graphs', percent: Math.round(percent * 10) / 10, message: `${done} of ${total} replicates (${d.learner})` });
      return out;
    } catch (err) {
      return failed(run, `bootstrap replicate ${d.replicateIndex + 1}`, err);
    }
  });

  queue.handle<FitFinishData, { versionId: string; number: number }>(FIT_JOB.finish, async (run) => {
    const d = run.data;
    const live = await current(run);
    if (!live) throw new JobCancelledError(d.jobId);
    const { spec } = live;
    try {
      await jobs.markRunning(d.jobId, run.attempt);
      await report(run, { stage: 'fitting mechanisms', percent: PERCENT.learned });
      const frame = await frameOf(d, spec);
      const replicates = d.learner === 'fixed' ? [] : await run.childResults<ReplicateOutput>();
      const compiled = await runCompute(
        'compile',
        {
          frame,
          replicates,
          fixedEdges: spec.fixedGraph?.edges.map(([a, b]) => [a, b] as [string, string]),
          family: spec.mechanisms.perNode ? { '*': spec.mechanisms.family, ...spec.mechanisms.perNode } : spec.mechanisms.family,
          noise: spec.mechanisms.noise,
          referenceRows: spec.referenceRows,
          seed: spec.seed,
        },
        { signal: run.signal, inline: deps.inlineCompute },
      );
      await report(run, { stage: 'saving version', percent: PERCENT.compiled });
      // The start job set started_at; a retried finish keeps measuring from the first try.
      const started = live.job.startedAt ? Date.parse(live.job.startedAt) : Date.now();
      const committed = await models.commitVersion({
        id: crypto.randomUUID(),
        modelId: d.modelId,
        workspaceId: d.workspaceId,
        jobId: d.jobId,
        spec: { ...spec, resolvedLearner: d.learner },
        datasetBatches: d.batches,
        rowCount: frame.nRows,
        graph: compiled.graph,
        diagnostics: { learner: d.learner, learnerNotes: d.learnerNotes, ...compiled.diagnostics },
        timings: { ...compiled.timings, totalMs: Date.now() - started },
        artifact: compiled.artifact,
      });
      await run.progress({ stage: 'done', percent: 100 });
      log({ jobId: d.jobId, versionId: committed.id, number: committed.number }, 'fit committed a version');
      return { versionId: committed.id, number: committed.number };
    } catch (err) {
      return failed(run, 'fitting mechanisms and compiling', err);
    }
  });
}
