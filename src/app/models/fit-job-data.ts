/** What travels in the queue for one fit: ids and choices only, never data rows. */
import type { ConcreteLearner } from '../../core/discovery/auto.js';

/** The first job of a fit (queue job id = the jobs row id). */
export interface FitStartData {
  readonly jobId: string;
  readonly workspaceId: string;
  readonly modelId: string;
  /** The dataset batches this fit uses, fixed when the fit was requested. */
  readonly batches: readonly number[];
}

/** One bootstrap replicate of a fit. */
export interface FitReplicateData extends FitStartData {
  readonly learner: ConcreteLearner;
  readonly replicateIndex: number;
}

/** The last job of a fit: merge the replicates, fit mechanisms, compile, commit. */
export interface FitFinishData extends FitStartData {
  readonly learner: ConcreteLearner | 'fixed';
  readonly learnerNotes: readonly string[];
}

export const FIT_JOB = {
  start: 'fit-start',
  replicate: 'fit-replicate',
  finish: 'fit-finish',
} as const;

/** Queue ids of a fit's jobs, derived from its jobs row id so any process can address them. */
export const fitQueueIds = {
  start: (jobId: string) => jobId,
  finish: (jobId: string) => `${jobId}-finish`,
  replicate: (jobId: string, k: number) => `${jobId}-r${k}`,
};

/** Tries per queue job (a crashed or killed worker's job is retried). */
export const FIT_ATTEMPTS = 3;
export const FIT_BACKOFF_MS = 2000;
