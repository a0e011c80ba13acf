/** Worker-thread side of the compute pool: runs one named task and posts its result or error. */
import { parentPort, workerData } from 'node:worker_threads';
import { computeTasks, type ComputeTaskName } from './compute-tasks.js';

const port = parentPort;
if (!port) throw new Error('compute-worker must run in a worker thread');
const { task, input } = workerData as { task: ComputeTaskName; input: never };
try {
  const output = (computeTasks[task] as (i: unknown) => unknown)(input);
  port.postMessage({ output });
} catch (e) {
  const err = e instanceof Error ? e : new Error(String(e));
  port.postMessage({ error: { name: err.name, message: err.message } });
}
