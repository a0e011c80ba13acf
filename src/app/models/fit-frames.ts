/**
 * Frames for fit jobs, loaded once per process and shared by every replicate that runs
 * here: keyed by (dataset, batches, variables), packed into shared memory so compute
 * threads read them without a copy. A handful of frames are kept (the fits in flight).
 */
import { LRUCache } from 'lru-cache';
import { packFrame, type FrameBuffer } from '../../core/discovery/replicate.js';
import type { DatasetsService } from '../datasets/datasets-service.js';

export interface FitFrameKey {
  workspaceId: string;
  datasetId: string;
  batches: readonly number[];
  variables: readonly string[];
}

export function createFitFrames(datasets: DatasetsService, maxFrames = 4) {
  const cache = new LRUCache<string, Promise<FrameBuffer>>({ max: maxFrames });
  return {
    load(key: FitFrameKey): Promise<FrameBuffer> {
      const id = JSON.stringify([key.workspaceId, key.datasetId, key.batches, key.variables]);
      let hit = cache.get(id);
      if (!hit) {
        hit = datasets
          .loadFrame({ workspaceId: key.workspaceId, datasetId: key.datasetId, batches: key.batches, columns: key.variables })
          .then(({ frame }) => packFrame(frame, true));
        // A failed load is not cached: the next try loads again.
        hit.catch(() => cache.delete(id));
        cache.set(id, hit);
      }
      return hit;
    },
  };
}

export type FitFrames = ReturnType<typeof createFitFrames>;
