/**
 * One suite that every queue adapter passes: the in-process queue always, BullMQ when
 * REDIS_URL is set (CI sets it). Each BullMQ run gets a fresh queue name and removes its keys.
 */
import { randomUUID } from 'node:crypto';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createBullmqQueue } from '../../src/jobs/bullmq-queue.js';
import { createInProcessQueue } from '../../src/jobs/in-process-queue.js';
import type { JobProgress, QueuePort } from '../../src/jobs/queue-port.js';

const redisUrl = process.env.REDIS_URL;
const adapters: Array<[string, () => { queue: QueuePort; cleanup: () => Promise<void> }]> = [
  ['in-process', () => ({ queue: createInProcessQueue({ concurrency: 4 }), cleanup: async () => {} })],
];
if (redisUrl) {
  adapters.push([
    'bullmq',
    () => {
      const queueName = `test-${randomUUID()}`;
      return {
        queue: createBullmqQueue({ redisUrl, queueName }),
        cleanup: async () => {
          const r = new Redis(redisUrl);
          const keys = [...(await r.keys(`bull:${queueName}:*`)), ...(await r.keys(`fulcrum:${queueName}:*`))];
          if (keys.length > 0) await r.del(...keys);
          r.disconnect();
        },
      };
    },
  ]);
}
console.log(`queue conformance covers: ${adapters.map(([n]) => n).join(', ')}`);

async function until(check: () => Promise<boolean>, ms = 15_000): Promise<void> {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    if (await check()) return;
    await new Promise((r) => setTimeout(r, 25));
  }
  throw new Error('condition not met in time');
}

describe.each(adapters)('queue adapter: %s', (_name, make) => {
  let queue: QueuePort;
  let cleanup: () => Promise<void>;
  const calls = new Map<string, number>();
  const collected = new Map<string, number[]>();

  beforeAll(async () => {
    ({ queue, cleanup } = make());
    queue.handle<{ x: number }, number>('square', async (run) => {
      await run.progress({ stage: 'squaring', percent: 50 });
      return run.data.x * run.data.x;
    });
    queue.handle<{ key: string }, string>('flaky', async (run) => {
      calls.set(run.data.key, (calls.get(run.data.key) ?? 0) + 1);
      if (run.attempt < 2) throw new Error('transient failure');
      return `ok on try ${run.attempt}`;
    });
    queue.handle('always-fails', async () => {
      throw new Error('the input is unusable');
    });
    queue.handle<{ parent: string }, number>('collect-children', async (run) => {
      collected.set(run.data.parent, await run.childResults<number>());
      return 0;
    });
    queue.handle<{ key: string }, string>('waits-for-cancel', async (run) => {
      calls.set(run.data.key, (calls.get(run.data.key) ?? 0) + 1);
      await new Promise<void>((resolve) => run.signal.addEventListener('abort', () => resolve(), { once: true }));
      throw new Error('aborted');
    });
    queue.handle<{ tick: string }, string>('tick', async (run) => {
      calls.set(run.data.tick, (calls.get(run.data.tick) ?? 0) + 1);
      return 'ticked';
    });
    await queue.startWorkers({ concurrency: 4 });
  });

  afterAll(async () => {
    await queue.close();
    await cleanup();
  });

  it('runs a job to completion and reports its progress', async () => {
    const seen: JobProgress[] = [];
    const id = randomUUID();
    const off = queue.onProgress((jobId, p) => jobId === id && seen.push(p));
    await new Promise((r) => setTimeout(r, 200)); // let a remote event stream attach
    await queue.add({ name: 'square', data: { x: 7 }, opts: { jobId: id } });
    await until(async () => (await queue.state(id)).state === 'completed');
    await until(async () => seen.length > 0);
    off();
    expect(seen[0]).toEqual({ stage: 'squaring', percent: 50 });
  });

  it('retries a failing job with backoff until it succeeds', async () => {
    const id = randomUUID();
    await queue.add({ name: 'flaky', data: { key: id }, opts: { jobId: id, attempts: 3, backoffMs: 50 } });
    await until(async () => (await queue.state(id)).state === 'completed');
    expect(calls.get(id)).toBe(2);
    expect((await queue.state(id)).attemptsMade).toBe(2);
  });

  it('ends a job that keeps failing as failed, with its reason', async () => {
    const id = randomUUID();
    await queue.add({ name: 'always-fails', data: {}, opts: { jobId: id, attempts: 2, backoffMs: 20 } });
    await until(async () => (await queue.state(id)).state === 'failed');
    const s = await queue.state(id);
    expect(s.attemptsMade).toBe(2);
    expect(s.failedReason).toContain('the input is unusable');
  });

  it('runs a flow: the parent gets every child result, in the order given', async () => {
    const parent = randomUUID();
    const children = [3, 4, 5].map((x) => ({ name: 'square', data: { x }, opts: { jobId: randomUUID() } }));
    await queue.addFlow({ name: 'collect-children', data: { parent }, opts: { jobId: parent } }, children);
    await until(async () => (await queue.state(parent)).state === 'completed');
    expect(collected.get(parent)).toEqual([9, 16, 25]);
  });

  it('cancels a running job without retrying it', async () => {
    const id = randomUUID();
    await queue.add({ name: 'waits-for-cancel', data: { key: id }, opts: { jobId: id, attempts: 3, backoffMs: 20 } });
    await until(async () => (await queue.state(id)).state === 'active');
    expect(await queue.cancel(id)).toBe(true);
    await until(async () => (await queue.state(id)).state === 'cancelled');
    await new Promise((r) => setTimeout(r, 200));
    expect(calls.get(id)).toBe(1);
  });

  it('answers "unknown" for a job it never had, and cancel says it was not found', async () => {
    const id = randomUUID();
    expect((await queue.state(id)).state).toBe('unknown');
    expect(await queue.cancel(id)).toBe(false);
  });

  it('fires a cron schedule and stops after it is removed', async () => {
    const tick = randomUUID();
    await queue.upsertSchedule(`s-${tick}`, { cron: '* * * * * *', tz: 'UTC' }, { name: 'tick', data: { tick } });
    await until(async () => (calls.get(tick) ?? 0) >= 1, 5000);
    expect(await queue.removeSchedule(`s-${tick}`)).toBe(true);
    await new Promise((r) => setTimeout(r, 1200));
    const after = calls.get(tick) ?? 0;
    await new Promise((r) => setTimeout(r, 1500));
    expect(calls.get(tick)).toBe(after);
  });
});
