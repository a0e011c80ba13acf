/**
 * Runs a compute task (compute-tasks.ts) in its own worker thread, so a fit never blocks
 * the event loop: the api keeps answering, and BullMQ keeps renewing its locks and
 * reporting progress while a learner or a mechanism fit runs. One thread per task keeps
 * cancellation simple and certain: an aborted task's thread is terminated.
 *
 */
import { Worker } from 'node:worker_threads';
import { computeTasks, type ComputeInput, type ComputeOutput, type ComputeTaskName } from './compute-tasks.js';

/**
 * A worker thread on compute-worker. Under TypeScript sources a Worker's `--import` of
 * tsx's loader is not honoured on Node 20, so a tiny eval'd script loads the .ts entry
 * through tsx's API instead; compiled output starts the .js entry directly.
 */
function startWorker(workerData: unknown): Worker {
  const here = import.meta.url;
  if (here.endsWith('.ts')) {
    const api = import.meta.resolve('tsx/esm/api');
    const target = new URL('./compute-worker.ts', here).href;
    const code = `import(${JSON.stringify(api)}).then(({ tsImport }) => tsImport(${JSON.stringify(target)}, ${JSON.stringify(here)}))`;
    return new Worker(code, { eval: true, workerData });
  }
  return new Worker(new URL('./compute-worker.js', here), { workerData });
}

/** Raised when a task's signal aborts it. */
export class ComputeAbortedError extends Error {
  constructor(task: string) {
    super(`compute task "${task}" was aborted`);
    this.name = 'ComputeAbortedError';
  }
}

export interface RunComputeOptions {
  /** Abort (cancel, shutdown) terminates the thread. */
  signal?: AbortSignal;
  /** Run in the calling thread (tests, benchmarks, tiny inputs). */
  inline?: boolean;
}

export function runCompute<K extends ComputeTaskName>(task: K, input: ComputeInput<K>, opts: RunComputeOptions = {}): Promise<ComputeOutput<K>> {
  if (opts.signal?.aborted) return Promise.reject(new ComputeAbortedError(task));
  if (opts.inline) {
    try {
      return Promise.resolve((computeTasks[task] as (i: ComputeInput<K>) => ComputeOutput<K>)(input));
    } catch (e) {
      return Promise.reject(e);
    }
  }
  return new Promise<ComputeOutput<K>>((resolve, reject) => {
    const worker = startWorker({ task, input });
    let settled = false;
    const settle = (fn: () => void): void => {
      if (settled) return;
      settled = true;
      opts.signal?.removeEventListener('abort', onAbort);
      fn();
      void worker.terminate();
    };
    const onAbort = (): void => settle(() => reject(new ComputeAbortedError(task)));
    opts.signal?.addEventListener('abort', onAbort, { once: true });
    worker.on('message', (msg: { output?: ComputeOutput<K>; error?: { name: string; message: string } }) => {
      if (msg.error) {
        const err = new Error(msg.error.message);
        err.name = msg.error.name;
        settle(() => reject(err));
      } else settle(() => resolve(msg.output as ComputeOutput<K>));
    });
    worker.on('error', (e) => settle(() => reject(e)));
    worker.on('exit', (code) => settle(() => reject(new Error(`compute task "${task}" ended (exit code ${code}) without a result`))));
  });
}
