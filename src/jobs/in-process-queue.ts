/**
 * The in-process adapter of the queue port, for the embedded default: one process, no
 * Redis. Same semantics as the BullMQ adapter where a single process can honour them:
 * retries with exponential backoff, flows (children in parallel, then the parent with
 * their results), cancellation through the handler's AbortSignal, progress events,
 * cron schedules. Jobs live in memory: a restart forgets waiting jobs (the jobs table in
 * the database keeps the history, and the app re-enqueues what was left unfinished).
 */
import { CronExpressionParser } from 'cron-parser';
import { randomUUID } from 'node:crypto';
import {
  JobCancelledError,
  type JobHandler,
  type JobProgress,
  type JobSpec,
  type QueueJobState,
  type QueuePort,
  type ScheduleSpec,
} from './queue-port.js';

interface Entry {
  spec: JobSpec;
  state: QueueJobState['state'];
  attemptsMade: number;
  progress?: JobProgress;
  failedReason?: string;
  controller?: AbortController;
  childIds: string[];
  parentId?: string;
  pendingChildren: number;
  result?: unknown;
}

export interface InProcessQueueOptions {
  /** Jobs run at once (children of one flow included). Default 2. */
  concurrency?: number;
}

export function createInProcessQueue(options: InProcessQueueOptions = {}): QueuePort {
  const jobs = new Map<string, Entry>();
  const handlers = new Map<string, JobHandler<unknown, unknown>>();
  const listeners = new Set<(id: string, p: JobProgress) => void>();
  const ready: string[] = [];
  const timers = new Set<NodeJS.Timeout>();
  const schedules = new Map<string, NodeJS.Timeout>();
  let concurrency = options.concurrency ?? 2;
  let running = 0;
  let started = false;
  let closed = false;

  const pump = (): void => {
    if (!started || closed) return;
    while (running < concurrency && ready.length > 0) {
      const id = ready.shift()!;
      const entry = jobs.get(id);
      if (!entry || entry.state !== 'waiting') continue;
      running++;
      void run(id, entry).finally(() => {
        running--;
        pump();
      });
    }
  };

  const later = (fn: () => void, ms: number): void => {
    const t = setTimeout(() => {
      timers.delete(t);
      fn();
    }, ms);
    timers.add(t);
  };

  const finishChild = (entry: Entry): void => {
    if (!entry.parentId) return;
    const parent = jobs.get(entry.parentId);
    if (!parent || parent.state !== 'waiting') return;
    if (entry.state === 'failed') {
      // A failed child fails its flow, as BullMQ's failParentOnFailure does.
      parent.state = 'failed';
      parent.failedReason = `child job ${entry.spec.opts.jobId} failed: ${entry.failedReason}`;
      return;
    }
    parent.pendingChildren--;
    if (parent.pendingChildren === 0) {
      ready.push(parent.spec.opts.jobId);
      pump();
    }
  };

  const run = async (id: string, entry: Entry): Promise<void> => {
    const handler = handlers.get(entry.spec.name);
    entry.state = 'active';
    entry.attemptsMade++;
    entry.controller = new AbortController();
    const signal = entry.controller.signal;
    try {
      if (!handler) throw new Error(`no handler registered for jobs named "${entry.spec.name}"`);
      entry.result = await handler({
        id,
        name: entry.spec.name,
        data: entry.spec.data,
        attempt: entry.attemptsMade,
        maxAttempts: entry.spec.opts.attempts ?? 3,
        signal,
        progress: async (p) => {
          entry.progress = p;
          for (const l of listeners) l(id, p);
        },
        childResults: async <C>() => entry.childIds.map((c) => jobs.get(c)?.result as C),
      });
      if (signal.aborted) throw new JobCancelledError(id);
      entry.state = 'completed';
      finishChild(entry);
    } catch (err) {
      if (signal.aborted || err instanceof JobCancelledError) {
        entry.state = 'cancelled';
        entry.failedReason = 'cancelled';
        return;
      }
      const attempts = entry.spec.opts.attempts ?? 3;
      entry.failedReason = err instanceof Error ? err.message : String(err);
      if (entry.attemptsMade < attempts && !closed) {
        entry.state = 'waiting';
        const delay = (entry.spec.opts.backoffMs ?? 2000) * 2 ** (entry.attemptsMade - 1);
        later(() => {
          ready.push(id);
          pump();
        }, delay);
      } else {
        entry.state = 'failed';
        finishChild(entry);
      }
    }
  };

  const register = (spec: JobSpec, parentId?: string): Entry => {
    if (jobs.has(spec.opts.jobId)) throw new RangeError(`a job with id ${spec.opts.jobId} already exists`);
    const entry: Entry = { spec, state: 'waiting', attemptsMade: 0, childIds: [], pendingChildren: 0, parentId };
    jobs.set(spec.opts.jobId, entry);
    return entry;
  };

  const queue: QueuePort = {
    kind: 'in-process',
    // Adding an id that exists is a no-op, as on BullMQ: a retried job may enqueue again.
    async add(spec) {
      if (jobs.has(spec.opts.jobId)) return spec.opts.jobId;
      register(spec);
      ready.push(spec.opts.jobId);
      pump();
      return spec.opts.jobId;
    },
    async addFlow(parentSpec, children) {
      if (jobs.has(parentSpec.opts.jobId)) return parentSpec.opts.jobId;
      const parent = register(parentSpec);
      for (const c of children) {
        register(c, parentSpec.opts.jobId);
        parent.childIds.push(c.opts.jobId);
      }
      parent.pendingChildren = children.length;
      if (children.length === 0) ready.push(parentSpec.opts.jobId);
      for (const c of children) ready.push(c.opts.jobId);
      pump();
      return parentSpec.opts.jobId;
    },
    handle(name, handler) {
      handlers.set(name, handler as JobHandler<unknown, unknown>);
    },
    async startWorkers(opts) {
      if (opts?.concurrency) concurrency = opts.concurrency;
      started = true;
      pump();
    },
    async cancel(id) {
      const entry = jobs.get(id);
      if (!entry) return false;
      for (const c of entry.childIds) await queue.cancel(c);
      if (entry.state === 'waiting') {
        entry.state = 'cancelled';
        entry.failedReason = 'cancelled';
      } else if (entry.state === 'active') entry.controller?.abort(new JobCancelledError(id));
      return true;
    },
    async state(id) {
      const e = jobs.get(id);
      if (!e) return { id, state: 'unknown', attemptsMade: 0 };
      return { id, state: e.state, attemptsMade: e.attemptsMade, progress: e.progress, failedReason: e.failedReason };
    },
    onProgress(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    async upsertSchedule(scheduleId, spec: ScheduleSpec, template) {
      // Validate now, so a bad expression is the caller's 4xx and not a silent no-op.
      CronExpressionParser.parse(spec.cron, { tz: spec.tz });
      await queue.removeSchedule(scheduleId);
      const arm = (): void => {
        if (closed) return;
        const next = CronExpressionParser.parse(spec.cron, { tz: spec.tz, currentDate: new Date() }).next().getTime();
        // setTimeout holds at most ~24.8 days; re-arm in steps for far-off ticks.
        const wait = Math.min(Math.max(0, next - Date.now()), 2 ** 31 - 1);
        const t = setTimeout(() => {
          if (Date.now() >= next - 5) void queue.add({ name: template.name, data: template.data, opts: { jobId: randomUUID(), attempts: 1 } });
          arm();
        }, wait);
        schedules.set(scheduleId, t);
      };
      arm();
    },
    async removeSchedule(scheduleId) {
      const t = schedules.get(scheduleId);
      if (!t) return false;
      clearTimeout(t);
      schedules.delete(scheduleId);
      return true;
    },
    async ping() {},
    async close() {
      closed = true;
      for (const t of timers) clearTimeout(t);
      for (const t of schedules.values()) clearTimeout(t);
      for (const e of jobs.values()) if (e.state === 'active') e.controller?.abort(new Error('queue closing'));
    },
  };
  return queue;
}
