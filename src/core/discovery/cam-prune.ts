import type { NodeScore } from './cam-search.js';
import type { CompiledKnowledge } from './knowledge.js';

/** A parent dropped by {@link pruneParents}, with what dropping it cost in held-out log-variance. */
export interface PrunedEdge {
  readonly from: number;
  readonly to: number;
  readonly loss: number;
}

/**
 * CAM's pruning step (Bühlmann, Peters & Ernest 2014, §4.3), on held-out fits: per node j, while
 * some non-required parent's removal raises j's held-out log residual variance by less than
 * `minGain`, drop the parent whose removal costs least (backward elimination). CAM tests
 * additive-model terms at p < 0.001 instead; a held-out loss needs no such test, as a parent
 * that does not help predict j on rows the fit has not seen does not lower it. (A paired
 * significance test on the held-out residuals was tried and dropped too many true edges of dense
 * graphs.) Edits `adj` in place; returns the dropped edges.
 */
export function pruneParents(adj: Uint8Array, d: number, knowledge: CompiledKnowledge, score: NodeScore, minGain: number): PrunedEdge[] {
  const dropped: PrunedEdge[] = [];
  for (let j = 0; j < d; j++) {
    const pa: number[] = [];
    for (let i = 0; i < d; i++) if (adj[i * d + j] === 1) pa.push(i);
    for (;;) {
      const base = score(j, pa);
      let worst = -1;
      let worstLoss = Infinity;
      for (const v of pa) {
        if (knowledge.required[v * d + j] === 1) continue;
        const loss =
          score(
            j,
            pa.filter((u) => u !== v),
          ) - base;
        if (loss < worstLoss) {
          worstLoss = loss;
          worst = v;
        }
      }
      if (worst < 0 || worstLoss >= minGain) break;
      adj[worst * d + j] = 0;
      pa.splice(pa.indexOf(worst), 1);
      dropped.push({ from: worst, to: j, loss: worstLoss });
    }
  }
  return dropped;
}
