/**
 * The BullMQ adapter of the queue port: jobs in Redis, workers on any machine.
 *
 * - One BullMQ queue per Fulcrum deployment (`prefix`), handlers chosen by job name.
 * - Flows: children fail their parent (failParentOnFailure) once their retries are spent.
 * - Cancellation crosses machines: the id goes into a Redis set and is published on a
 *   channel; the worker running the job aborts its signal, and a cancelled job is failed
 *   with UnrecoverableError so BullMQ does not retry it.
 * - Producers fail fast when Redis is down (no offline queue), so the api can answer 503
 *   instead of hanging; workers keep reconnecting.
 */
import { FlowProducer, Queue, QueueEvents, UnrecoverableError, Worker, type Job } from 'bullmq';
import { Redis } from 'ioredis';
import {
  JobCancelledError,
  type JobHandler,
  type JobProgress,
  type JobSpec,
  type QueueJobState,
  type QueuePort,
} from './queue-port.js';

export interface BullmqQueueOptions {
  redisUrl: string;
  /** Queue name; tests use a unique one each. Default "fulcrum". */
  queueName?: string;
  /**
   * How long a worker's lock on a running job lasts, in ms (renewed at half this while the
   * job runs). A job whose worker died is handed back to another worker once it expires.
   * Default 60000.
   */
  lockDurationMs?: number;
  /** How often workers look for jobs whose lock expired, in ms. Default min(30000, lockDurationMs). */
  stalledIntervalMs?: number;
}

/** Parent data of a flow is wrapped so the parent can return its children's results in order. */
interface FlowEnvelope {
  readonly __flow: true;
  readonly payload: unknown;
  readonly childIds: readonly string[];
}

const isEnvelope = (d: unknown): d is FlowEnvelope => typeof d === 'object' && d !== null && (d as FlowEnvelope).__flow === true;

export function createBullmqQueue(options: BullmqQueueOptions): QueuePort {
  const name = options.queueName ?? 'fulcrum';
  const lockDuration = options.lockDurationMs ?? 60_000;
  const stalledInterval = options.stalledIntervalMs ?? Math.min(30_000, lockDuration);
  const producerConn = new Redis(options.redisUrl, { maxRetriesPerRequest: 1, enableOfflineQueue: false, lazyConnect: false });
  const workerConn = (): Redis => new Redis(options.redisUrl, { maxRetriesPerRequest: null });
  const owned: Redis[] = [producerConn];
  // BullMQ must not wait for an offline queue on the producer either.
  producerConn.on('error', () => {});
  const queue = new Queue(name, { connection: producerConn });
  const flows = new FlowProducer({ connection: producerConn });
  // Redis being down is answered per call (503 on submission); the objects' own error events are not news.
  queue.on('error', () => {});
  flows.on('error', () => {});
  const handlers = new Map<string, JobHandler<unknown, unknown>>();
  const listeners = new Set<(id: string, p: JobProgress) => void>();
  const cancelledKey = `fulcrum:${name}:cancelled`;
  const cancelChannel = `fulcrum:${name}:cancel`;
  let worker: Worker | undefined;
  let events: QueueEvents | undefined;
  let subscriber: Redis | undefined;

  const retryOpts = (spec: JobSpec) => ({
    jobId: spec.opts.jobId,
    attempts: spec.opts.attempts ?? 3,
    backoff: { type: 'exponential' as const, delay: spec.opts.backoffMs ?? 2000 },
    removeOnComplete: { age: 7 * 24 * 3600 },
    removeOnFail: { age: 30 * 24 * 3600 },
  });

  const isCancelled = async (id: string): Promise<boolean> => (await producerConn.sismember(cancelledKey, id)) === 1;

  const ensureEvents = (): void => {
    if (events) return;
    const conn = workerConn();
    owned.push(conn);
    events = new QueueEvents(name, { connection: conn });
    events.on('progress', ({ jobId, data }) => {
      const p = data as unknown as JobProgress;
      if (p && typeof p === 'object' && 'stage' in p) for (const l of listeners) l(jobId, p);
    });
  };

  const process = async (job: Job, _token?: string, signal?: AbortSignal): Promise<unknown> => {
    const id = job.id!;
    if (await isCancelled(id)) throw new UnrecoverableError(`job ${id} was cancelled`);
    const handler = handlers.get(job.name);
    if (!handler) throw new UnrecoverableError(`no handler registered for jobs named "${job.name}"`);
    const envelope = isEnvelope(job.data) ? job.data : undefined;
    const controller = new AbortController();
    const relay = () => controller.abort(signal?.reason);
    signal?.addEventListener('abort', relay, { once: true });
    try {
      return await handler({
        id,
        name: job.name,
        data: envelope ? envelope.payload : job.data,
        attempt: job.attemptsMade + 1,
        maxAttempts: job.opts.attempts ?? 1,
        signal: controller.signal,
        progress: async (p) => {
          await job.updateProgress(p as unknown as object);
        },
        childResults: async <C>() => {
          if (!envelope) return [];
          const values = await job.getChildrenValues<C>();
          const byId = new Map<string, C>();
          for (const [key, v] of Object.entries(values)) byId.set(key.slice(key.lastIndexOf(':') + 1), v);
          return envelope.childIds.map((c) => byId.get(c) as C);
        },
      });
    } catch (err) {
      if (controller.signal.aborted || err instanceof JobCancelledError || (await isCancelled(id))) {
        throw new UnrecoverableError(`job ${id} was cancelled`);
      }
      throw err;
    } finally {
      signal?.removeEventListener('abort', relay);
    }
  };

  const port: QueuePort = {
    kind: 'bullmq',
    async add(spec) {
      await queue.add(spec.name, spec.data, retryOpts(spec));
      return spec.opts.jobId;
    },
    async addFlow(parent, children) {
      const envelope: FlowEnvelope = { __flow: true, payload: parent.data, childIds: children.map((c) => c.opts.jobId) };
      await flows.add({
        name: parent.name,
        queueName: name,
        data: envelope,
        opts: retryOpts(parent),
        children: children.map((c) => ({
          name: c.name,
          queueName: name,
          data: c.data,
          opts: { ...retryOpts(c), failParentOnFailure: true },
        })),
      });
      return parent.opts.jobId;
    },
    handle(jobName, handler) {
      handlers.set(jobName, handler as JobHandler<unknown, unknown>);
    },
    async startWorkers(opts) {
      if (worker) return;
      const conn = workerConn();
      owned.push(conn);
      worker = new Worker(name, process, { connection: conn, concurrency: opts?.concurrency ?? 1, lockDuration, stalledInterval });
      worker.on('error', () => {});
      subscriber = workerConn();
      owned.push(subscriber);
      await subscriber.subscribe(cancelChannel);
      subscriber.on('message', (_ch, id: string) => worker?.cancelJob(id, 'cancelled'));
      await worker.waitUntilReady();
    },
    async cancel(id) {
      const job = await queue.getJob(id);
      if (!job) return false;
      const ids = [id];
      if (isEnvelope(job.data)) ids.push(...job.data.childIds);
      await producerConn.sadd(cancelledKey, ...ids);
      for (const c of ids) {
        const state = await queue.getJobState(c);
        if (state === 'active') await producerConn.publish(cancelChannel, c);
        else if (state === 'waiting' || state === 'delayed' || state === 'prioritized') {
          await (await queue.getJob(c))?.remove().catch(() => {});
        }
      }
      // A parent still waiting for children is failed when a child fails; remove it outright.
      if ((await queue.getJobState(id)) === 'waiting-children') await job.remove({ removeChildren: true }).catch(() => {});
      return true;
    },
    async state(id): Promise<QueueJobState> {
      const cancelled = await isCancelled(id);
      const job = await queue.getJob(id);
      if (!job) return { id, state: cancelled ? 'cancelled' : 'unknown', attemptsMade: 0 };
      const raw = await job.getState();
      const state: QueueJobState['state'] = cancelled
        ? raw === 'completed'
          ? 'completed'
          : 'cancelled'
        : raw === 'active' || raw === 'completed' || raw === 'failed'
          ? raw
          : raw === 'unknown'
            ? 'unknown'
            : 'waiting';
      const progress = typeof job.progress === 'object' && job.progress !== null ? (job.progress as unknown as JobProgress) : undefined;
      return { id, state, attemptsMade: job.attemptsMade, progress, failedReason: job.failedReason || undefined };
    },
    onProgress(listener) {
      ensureEvents();
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    async upsertSchedule(scheduleId, spec, template) {
      await queue.upsertJobScheduler(scheduleId, { pattern: spec.cron, tz: spec.tz }, { name: template.name, data: template.data, opts: { attempts: 1 } });
    },
    async removeSchedule(scheduleId) {
      return queue.removeJobScheduler(scheduleId);
    },
    async ping() {
      await producerConn.ping();
    },
    async close() {
      await worker?.close();
      await events?.close();
      await flows.close();
      await queue.close();
      // BullMQ does not close connections it was given (STACK.md pitfall 5).
      for (const c of owned) c.disconnect();
    },
  };
  return port;
}
