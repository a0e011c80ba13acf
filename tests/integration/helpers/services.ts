/**
 * Real services for the integration suites: a PostgreSQL schema of its own, BullMQ worker
 * processes (`node --import tsx src/main.ts worker`) pointed at that schema, a private
 * redis-server on a free port, and clean-up of a queue's Redis keys. Nothing here touches the
 * machine's shared Redis beyond the keys of the test's own queue name. The process and scope
 * helpers live in tools/ (bench/api.ts uses them too) and are re-exported here.
 */
import { spawn } from 'node:child_process';
import { Redis } from 'ioredis';
import { freePort, sleep, startMain, type MainProcess } from '../../../tools/process-helpers.js';
import { dropQueueKeys, urlWithSchema } from '../../../tools/service-scopes.js';

/** A spawned worker process and what it printed. */
export type WorkerProcess = MainProcess;

/** Start `src/main.ts worker` with this environment; resolves once it says it started. */
export function startWorker(env: Record<string, string>, timeoutMs = 60_000): Promise<WorkerProcess> {
  return startMain('worker', { env: { LOG_LEVEL: 'warn', ...env }, ready: (out) => out.includes('fit worker started'), timeoutMs });
}

export { dropQueueKeys, freePort, sleep, urlWithSchema };

/** A private redis-server (no persistence) on `port`; resolves when it answers PING. */
export async function startRedis(port: number): Promise<{ url: string; kill(): Promise<void> }> {
  const child = spawn('redis-server', ['--port', String(port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no'], { stdio: 'ignore' });
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  const url = `redis://127.0.0.1:${port}`;
  const probe = new Redis(url, { lazyConnect: true, maxRetriesPerRequest: 0, retryStrategy: () => null });
  probe.on('error', () => {});
  const end = Date.now() + 10_000;
  for (;;) {
    try {
      await probe.connect();
      await probe.ping();
      break;
    } catch {
      if (Date.now() > end) {
        child.kill('SIGKILL');
        throw new Error(`redis-server on port ${port} did not answer`);
      }
      await sleep(50);
    }
  }
  probe.disconnect();
  return {
    url,
    async kill() {
      if (child.exitCode !== null || child.signalCode !== null) return;
      child.kill('SIGKILL');
      await exited;
    },
  };
}
