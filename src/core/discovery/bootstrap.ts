/**
 * Nonparametric bootstrap ensemble of a graph learner (Friedman, Goldszmidt & Wyner 1999):
 * the learner runs on B resamples of the rows (drawn with replacement), and the B outputs
 * are merged into a weighted set of distinct DAGs with edge probabilities (dag-set.ts).
 *
 * Replicates run on worker threads (the only place in src/core that uses worker_threads).
 * The frame is packed once into a SharedArrayBuffer that every worker reads, so nothing is
 * copied per replicate. The result depends only on (data, knowledge, options, seed, B), not
 * on the number of threads or the order in which replicates finish.
 *
 * Worker entry: bootstrap-worker.js in compiled output; under TypeScript sources (tsx,
 * vitest) bootstrap-worker.ts behind tsx's hooks (see startWorker).
 */
import { availableParallelism } from 'node:os';
import { createRequire } from 'node:module';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Frame } from '../frame/frame.js';
import { Rng } from '../random/rng.js';
import { mergeReplicates, type DagSet, type MergeOptions } from './dag-set.js';
import type { Knowledge } from './knowledge.js';
import type { LearnOptions } from './learn.js';
import { packFrame, runReplicate, type ReplicateLearner, type ReplicateResult } from './replicate.js';

/** Options of {@link runBootstrap}. */
export interface BootstrapOptions extends MergeOptions {
  /** Number of resamples B (≥ 1). */
  readonly replicates: number;
  /** Seed of the resamples and of each replicate's learner. */
  readonly seed: number;
  /** Worker threads (default os.availableParallelism()); 1 runs every replicate in this thread. */
  readonly threads?: number;
  /**
   * A learner object to use instead of the front door `learn` (in-thread only: with one,
   * `threads` is ignored, since a function cannot be sent to a worker).
   */
  readonly learner?: ReplicateLearner<any>;
  /** Called after each finished replicate. */
  readonly onReplicate?: (done: number, total: number) => void;
}

/** A bootstrap ensemble and the raw result of every replicate, by replicate index. */
export interface BootstrapResult extends DagSet {
  readonly results: readonly ReplicateResult[];
}

/** Run B bootstrap replicates of a learner and merge them into a DagSet. */
export async function runBootstrap(frame: Frame, knowledge: Knowledge, options: LearnOptions, boot: BootstrapOptions): Promise<BootstrapResult> {
  const b = boot.replicates;
  if (!Number.isInteger(b) || b < 1) throw new RangeError(`replicates must be a whole number ≥ 1, got ${b}`);
  if (!Number.isFinite(boot.seed)) throw new RangeError(`seed must be a finite number, got ${boot.seed}`);
  const requested = boot.threads ?? availableParallelism();
  if (!Number.isInteger(requested) || requested < 1) throw new RangeError(`threads must be a whole number ≥ 1, got ${requested}`);
  const threads = boot.learner ? 1 : Math.min(requested, b);
  const results: ReplicateResult[] = new Array(b);
  if (threads === 1) {
    for (let k = 0; k < b; k++) {
      results[k] = runReplicate({ frame, knowledge, options, replicateIndex: k, seed: boot.seed }, boot.learner);
      boot.onReplicate?.(k + 1, b);
    }
  } else {
    await runOnWorkers(frame, knowledge, options, boot, threads, results);
  }
  const names = frame.columns.map((c) => c.name);
  const set = mergeReplicates(results, names, Rng.create(boot.seed).stream(0xffffffff), boot);
  const learners = [...new Set(results.map((r) => r.learner))].join(', ');
  const cpdags = results.filter((r) => r.kind === 'cpdag').length;
  const notes = [
    `${b} bootstrap replicates of ${learners} (seed ${boot.seed}, ${threads} thread${threads > 1 ? 's' : ''}); ${cpdags} returned a CPDAG; ${set.graphs.length} distinct DAGs kept`,
    ...set.notes,
  ];
  return { ...set, notes, results };
}

/**
 * Start one bootstrap worker. Compiled output: bootstrap-worker.js as is. TypeScript sources
 * (tsx, vitest): Node 20 does not apply `--import` loaders to a worker's entry module, so the
 * worker is a small eval'd script that registers tsx's ESM hooks (tsx/esm/api `register`)
 * and then imports bootstrap-worker.ts.
 */
function startWorker(workerData: unknown): Worker {
  const here = import.meta.url;
  if (!here.endsWith('.ts')) return new Worker(new URL('./bootstrap-worker.js', here), { workerData });
  const loader = pathToFileURL(createRequire(here).resolve('tsx')).href; // tsx/dist/loader.mjs
  const api = new URL('./esm/api/index.mjs', loader).href;
  const entry = new URL('./bootstrap-worker.ts', here).href;
  const code = `import(${JSON.stringify(api)}).then((m) => { m.register(); return import(${JSON.stringify(entry)}); });`;
  return new Worker(code, { eval: true, workerData });
}

function runOnWorkers(
  frame: Frame,
  knowledge: Knowledge,
  options: LearnOptions,
  boot: BootstrapOptions,
  threads: number,
  results: ReplicateResult[],
): Promise<void> {
  const b = boot.replicates;
  const packed = packFrame(frame, true);
  return new Promise<void>((resolve, reject) => {
    const workers: Worker[] = [];
    let next = 0;
    let done = 0;
    let failed = false;
    const stopAll = (): void => {
      for (const w of workers) void w.terminate();
    };
    const fail = (err: Error): void => {
      if (failed) return;
      failed = true;
      stopAll();
      reject(err);
    };
    const feed = (w: Worker): void => {
      if (next < b) w.postMessage({ replicateIndex: next++, seed: boot.seed });
    };
    for (let t = 0; t < threads; t++) {
      const w = startWorker({ frame: packed, knowledge, options });
      workers.push(w);
      w.on('message', (msg: { replicateIndex: number; result?: ReplicateResult; error?: { name: string; message: string } }) => {
        if (failed) return;
        if (msg.error) {
          const e = new Error(`bootstrap replicate ${msg.replicateIndex} failed: ${msg.error.message}`);
          e.name = msg.error.name;
          fail(e);
          return;
        }
        results[msg.replicateIndex] = msg.result as ReplicateResult;
        done++;
        boot.onReplicate?.(done, b);
        if (done === b) {
          stopAll();
          resolve();
        } else feed(w);
      });
      w.on('error', (e) => fail(e instanceof Error ? e : new Error(String(e))));
      w.on('exit', (code) => {
        if (!failed && done < b && code !== 0) fail(new Error(`bootstrap worker exited with code ${code} before finishing`));
      });
      feed(w);
    }
  });
}
