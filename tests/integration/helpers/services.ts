/**
 * Real services for the integration suites: a PostgreSQL schema of its own, BullMQ worker
 * processes (`node --import tsx src/main.ts worker`) pointed at that schema, a private
 * redis-server on a free port, and clean-up of a queue's Redis keys. Nothing here touches the
 * machine's shared Redis beyond the keys of the test's own queue name.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';
import { Redis } from 'ioredis';

/** DATABASE_URL with `search_path` set to `schema` on every connection (for a child process). */
export function urlWithSchema(databaseUrl: string, schema: string): string {
  const u = new URL(databaseUrl);
  u.searchParams.set('options', `-c search_path=${schema}`);
  return u.toString();
}

/** A spawned worker process and what it printed. */
export interface WorkerProcess {
  child: ChildProcess;
  output(): string;
  /** Resolves when the process has exited. */
  exited: Promise<number | null>;
  /** SIGTERM, then SIGKILL after `graceMs`; resolves once it exited. */
  stop(graceMs?: number): Promise<void>;
}

/** Start `src/main.ts worker` with this environment; resolves once it says it started. */
export async function startWorker(env: Record<string, string>, timeoutMs = 60_000): Promise<WorkerProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/main.ts', 'worker'], {
    cwd: process.cwd(),
    env: { ...process.env, LOG_LEVEL: 'warn', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (b: Buffer) => (out += b.toString()));
  child.stderr!.on('data', (b: Buffer) => (out += b.toString()));
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  const started = Date.now();
  while (!out.includes('fit worker started')) {
    if (child.exitCode !== null || child.signalCode !== null) throw new Error(`worker exited early:\n${out}`);
    if (Date.now() - started > timeoutMs) {
      child.kill('SIGKILL');
      throw new Error(`worker did not start in ${timeoutMs} ms:\n${out}`);
    }
    await sleep(50);
  }
  return {
    child,
    output: () => out,
    exited,
    async stop(graceMs = 10_000) {
      if (child.exitCode !== null || child.signalCode !== null) return;
      child.kill('SIGTERM');
      const t = setTimeout(() => child.kill('SIGKILL'), graceMs);
      await exited;
      clearTimeout(t);
    },
  };
}

/** A free TCP port on 127.0.0.1 (free when asked; the caller binds it right after). */
export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const port = (srv.address() as { port: number }).port;
      srv.close(() => resolve(port));
    });
  });
}

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

/** Delete every key of a BullMQ queue name (and Fulcrum's cancel keys) from a Redis. */
export async function dropQueueKeys(redisUrl: string, queueName: string): Promise<void> {
  const r = new Redis(redisUrl, { maxRetriesPerRequest: 1 });
  r.on('error', () => {});
  try {
    for (const pattern of [`bull:${queueName}:*`, `fulcrum:${queueName}:*`]) {
      let cursor = '0';
      do {
        const [next, keys] = await r.scan(cursor, 'MATCH', pattern, 'COUNT', 500);
        cursor = next;
        if (keys.length > 0) await r.del(...keys);
      } while (cursor !== '0');
    }
  } finally {
    r.disconnect();
  }
}

export const sleep = (ms: number) => new Promise<void>((r) => setTimeout(r, ms));
