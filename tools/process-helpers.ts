/**
 * Fulcrum as child processes, for the suites and benchmarks that drive it from outside: a free
 * port, `src/main.ts <command>` spawned with its output captured, started and awaited until it
 * says it is ready, and stopped with SIGTERM (SIGKILL after a grace period).
 * Outside src/: nothing here ships with the service.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';

export const sleep = (ms: number) => new Promise<void>((r) => setTimeout(r, ms));

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

/** A spawned `src/main.ts` process and what it printed. */
export interface MainProcess {
  child: ChildProcess;
  /** stdout and stderr so far, interleaved as they arrived. */
  output(): string;
  /** Resolves with the exit code (null when killed by a signal) once the process has exited. */
  exited: Promise<number | null>;
  /** SIGTERM, then SIGKILL after `graceMs` (default 10 s); resolves once it exited. */
  stop(graceMs?: number): Promise<void>;
}

const hasExited = (child: ChildProcess) => child.exitCode !== null || child.signalCode !== null;

/**
 * Spawn `node --import tsx src/main.ts …args` in the current folder. `env` goes on top of this
 * process's environment, or replaces it when `inheritEnv` is false (to run as a user would,
 * with nothing but what is given).
 */
export function spawnMain(args: readonly string[], env: Record<string, string>, options: { inheritEnv?: boolean } = {}): MainProcess {
  const child = spawn(process.execPath, ['--import', 'tsx', 'src/main.ts', ...args], {
    cwd: process.cwd(),
    env: options.inheritEnv === false ? env : { ...process.env, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (b: Buffer) => (out += b.toString()));
  child.stderr!.on('data', (b: Buffer) => (out += b.toString()));
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  return {
    child,
    output: () => out,
    exited,
    async stop(graceMs = 10_000) {
      if (hasExited(child)) return;
      child.kill('SIGTERM');
      const t = setTimeout(() => child.kill('SIGKILL'), graceMs);
      await exited;
      clearTimeout(t);
    },
  };
}

/** How to tell that a started process is ready. */
export interface StartMainOptions {
  /** Environment on top of this process's own. */
  env: Record<string, string>;
  /** True once the process is ready; polled with its output so far (it may probe, e.g. /healthz). */
  ready: (output: string) => boolean | Promise<boolean>;
  /** Give up after this long, killing the process. Default 60 s. */
  timeoutMs?: number;
}

/** Start `src/main.ts <command>` and resolve once `ready` holds; throws with its output if it exits or times out first. */
export async function startMain(command: string, options: StartMainOptions): Promise<MainProcess> {
  const p = spawnMain([command], options.env);
  const timeoutMs = options.timeoutMs ?? 60_000;
  const end = Date.now() + timeoutMs;
  while (!(await options.ready(p.output()))) {
    if (hasExited(p.child)) throw new Error(`${command} exited early:\n${p.output()}`);
    if (Date.now() > end) {
      p.child.kill('SIGKILL');
      throw new Error(`${command} did not start in ${timeoutMs} ms:\n${p.output()}`);
    }
    await sleep(50);
  }
  return p;
}
