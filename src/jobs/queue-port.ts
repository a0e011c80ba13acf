/**
 * The job-queue port: what the application needs from a queue, with two adapters —
 * BullMQ on Redis (`bullmq-queue.ts`, many workers on many machines) and an in-process
 * queue for the embedded default (`in-process-queue.ts`). The same handlers run on both.
 *
 * Fan-out: `addFlow` enqueues a parent with children; the children run anywhere, in
 * parallel, and the parent runs once all of them have finished, with their results
 * (BullMQ flows on Redis). A bootstrap fit is one flow: one child per replicate.
 */

/** Progress a handler reports; stored on the job and streamed to watchers. */
export interface JobProgress {
  readonly stage: string;
  /** 0–100 for the whole job. */
  readonly percent: number;
  readonly message?: string;
}

export interface JobOptions {
  /** Our id for the job (a uuid from the jobs table); the queue must use it. */
  readonly jobId: string;
  /** Tries in all, the first included. Default 3. */
  readonly attempts?: number;
  /** First retry delay in ms, doubled at each retry (exponential backoff). Default 2000. */
  readonly backoffMs?: number;
}

export interface JobSpec<D = unknown> {
  readonly name: string;
  readonly data: D;
  readonly opts: JobOptions;
}

/** What a handler sees of the job it runs. */
export interface JobRun<D = unknown> {
  readonly id: string;
  readonly name: string;
  readonly data: D;
  /** 1 on the first try. */
  readonly attempt: number;
  /** Tries in all; `attempt === maxAttempts` is the last one. */
  readonly maxAttempts: number;
  /** Aborted when the job is cancelled or the worker shuts down. */
  readonly signal: AbortSignal;
  progress(p: JobProgress): Promise<void>;
  /** For a flow's parent: the children's results, in the order the children were given. */
  childResults<C = unknown>(): Promise<C[]>;
}

export type JobHandler<D = unknown, R = unknown> = (run: JobRun<D>) => Promise<R>;

export type JobStateName = 'waiting' | 'active' | 'completed' | 'failed' | 'cancelled' | 'unknown';

export interface QueueJobState {
  readonly id: string;
  readonly state: JobStateName;
  readonly attemptsMade: number;
  readonly progress?: JobProgress;
  readonly failedReason?: string;
}

export interface ScheduleSpec {
  /** Five-field cron expression. */
  readonly cron: string;
  /** IANA time zone, e.g. Europe/London. */
  readonly tz: string;
}

export interface QueuePort {
  readonly kind: 'bullmq' | 'in-process';
  add<D>(job: JobSpec<D>): Promise<string>;
  /** Children run in parallel (anywhere); the parent runs after all of them, with their results. */
  addFlow<P, C>(parent: JobSpec<P>, children: ReadonlyArray<JobSpec<C>>): Promise<string>;
  /** Registers the handler for jobs of this name (workers only). */
  handle<D, R>(name: string, handler: JobHandler<D, R>): void;
  /** Starts consuming jobs with the registered handlers. */
  startWorkers(opts?: { concurrency?: number }): Promise<void>;
  /** Cancels a waiting or running job (and a flow's children); true when the job was found. */
  cancel(id: string): Promise<boolean>;
  state(id: string): Promise<QueueJobState>;
  /** Subscribes to progress of any job; returns the unsubscribe function. */
  onProgress(listener: (id: string, p: JobProgress) => void): () => void;
  /** A repeating job: on each tick, `template` is added with a fresh id from `makeId`. */
  upsertSchedule<D>(scheduleId: string, spec: ScheduleSpec, template: { name: string; data: D }): Promise<void>;
  removeSchedule(scheduleId: string): Promise<boolean>;
  /** Throws when the queue's backing service does not answer. */
  ping(): Promise<void>;
  close(): Promise<void>;
}

/** Raised inside a handler's run when the job was cancelled; not retried. */
export class JobCancelledError extends Error {
  constructor(id: string) {
    super(`job ${id} was cancelled`);
    this.name = 'JobCancelledError';
  }
}
