/**
 * Worker-thread side of the bootstrap runner. workerData carries the packed frame (shared
 * memory), the knowledge and the learner options once; each message then names one replicate
 * to run, and the reply carries its result (or its error).
 */
import { parentPort, workerData } from 'node:worker_threads';
import { runReplicate, type FrameBuffer } from './replicate.js';
import type { Knowledge } from './knowledge.js';
import type { LearnOptions } from './learn.js';

interface Setup {
  readonly frame: FrameBuffer;
  readonly knowledge: Knowledge;
  readonly options: LearnOptions;
}

const setup = workerData as Setup;
const port = parentPort;
if (!port) throw new Error('bootstrap-worker must run in a worker thread');

port.on('message', (msg: { replicateIndex: number; seed: number }) => {
  try {
    const result = runReplicate({ frame: setup.frame, knowledge: setup.knowledge, options: setup.options, replicateIndex: msg.replicateIndex, seed: msg.seed });
    port.postMessage({ replicateIndex: msg.replicateIndex, result });
  } catch (e) {
    const err = e instanceof Error ? e : new Error(String(e));
    port.postMessage({ replicateIndex: msg.replicateIndex, error: { name: err.name, message: err.message } });
  }
});
