/**
 * The command line as a user runs it: `serve` on the embedded default prints the first admin
 * key once, answers, and exits cleanly on SIGTERM; `migrate` reports; `worker` without Redis
 * says what it needs; a bad environment is named.
 */
import http from 'node:http';
import { cp, mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnMain } from '../../tools/process-helpers.js';
import { pgliteTemplate } from './helpers/test-app.js';

/** The command line as a user runs it: nothing from this process's environment but PATH. */
const run = (args: string[], env: Record<string, string>) =>
  spawnMain(args, { PATH: process.env.PATH ?? '', NODE_ENV: 'production', ...env }, { inheritEnv: false });

async function waitFor(pred: () => boolean, ms: number): Promise<void> {
  const end = Date.now() + ms;
  while (!pred()) {
    if (Date.now() > end) throw new Error('timed out waiting');
    await new Promise((r) => setTimeout(r, 100));
  }
}

describe('main entry points (embedded back end)', () => {
  let dir: string;
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'fulcrum-main-'));
    await cp(await pgliteTemplate(), dir, { recursive: true });
  });
  afterAll(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  it('serve prints the admin key once, answers with it, finishes an upload in flight on SIGTERM and exits 0', async () => {
    const r = run(['serve'], { FULCRUM_DATA_DIR: dir, PORT: '0', LOG_LEVEL: 'info' });
    try {
      await waitFor(() => /Server listening at http:\/\/127\.0\.0\.1:\d+/.test(r.output()), 60_000);
      const port = /Server listening at http:\/\/127\.0\.0\.1:(\d+)/.exec(r.output())![1];
      const key = /(fk_[a-z2-9]+_[A-Za-z0-9_-]+)/.exec(r.output())![1];
      expect(r.output().split(key).length - 1).toBe(1);
      const health = await fetch(`http://127.0.0.1:${port}/healthz`);
      expect(health.status).toBe(200);
      const keys = await fetch(`http://127.0.0.1:${port}/v1/keys`, { headers: { authorization: `Bearer ${key}` } });
      expect(keys.status).toBe(200);

      // An upload in flight when SIGTERM arrives still completes before the process exits.
      const upload = http.request({
        host: '127.0.0.1',
        port: Number(port),
        method: 'POST',
        path: '/v1/datasets?name=in-flight',
        headers: { authorization: `Bearer ${key}`, 'content-type': 'text/csv' },
      });
      const answer = new Promise<{ status: number; body: string }>((resolve, reject) => {
        upload.on('response', (res) => {
          let body = '';
          res.on('data', (d) => (body += String(d)));
          res.on('end', () => resolve({ status: res.statusCode ?? 0, body }));
        });
        upload.on('error', reject);
      });
      upload.write('region,prior_kwh\ncoast,3100\n');
      await waitFor(() => r.output().includes('"path":"/v1/datasets"'), 20_000);
      r.child.kill('SIGTERM');
      await waitFor(() => r.output().includes('shutting down'), 20_000);
      upload.end('valley,5200\n');
      const done = await answer;
      expect(done.status).toBe(201);
      expect(JSON.parse(done.body).dataset.rowCount).toBe(2);
      expect(await r.exited).toBe(0);
      // The key is in the terminal banner only: the request log never repeats it.
      expect(r.output().split(key).length - 1).toBe(1);
    } finally {
      if (r.child.exitCode === null) r.child.kill('SIGKILL');
    }
  });

  it('migrate reports that nothing is pending on a migrated database', async () => {
    const r = run(['migrate'], { FULCRUM_DATA_DIR: dir });
    expect(await r.exited).toBe(0);
    expect(r.output()).toContain('No pending migrations');
  });

  it('worker without REDIS_URL says it needs Redis; a bad environment is named; an unknown command shows usage (all exit 2)', async () => {
    const [worker, bad, unknown] = [run(['worker'], {}), run(['serve'], { PORT: 'eighty' }), run(['fly'], {})];
    expect(await Promise.all([worker.exited, bad.exited, unknown.exited])).toEqual([2, 2, 2]);
    expect(worker.output()).toMatch(/worker needs REDIS_URL/);
    expect(bad.output()).toContain('PORT');
    expect(unknown.output()).toContain('usage:');
  });
});
