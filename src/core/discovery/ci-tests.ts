import type { Frame } from '../frame/frame.js';
import { createFisherZTest } from './fisher-z-test.js';
import { createMixedCiTest } from './mixed-ci-test.js';

/**
 * A conditional independence test over the columns of one frame, with a cache of
 * results per (unordered pair, sorted conditioning set): PC-stable asks for the same
 * test from both endpoints, and the majority / conservative orientation rules re-ask it.
 */
export interface CiTest {
  /** p-value of H0: i ⊥ j | cond. */
  pValue(i: number, j: number, cond: readonly number[]): number;
  /** Tests actually computed (cache misses). */
  readonly computed: number;
  /** Name of the test family chosen for this frame. */
  readonly family: 'fisher-z' | 'mixed';
}

/**
 * Chooses the test for the data: Fisher z on partial correlations when every column is
 * continuous, otherwise a per-call choice — Fisher z when i, j and the conditioning set
 * are all continuous, the nested-regression likelihood-ratio test (mixed-ci-test.ts) as
 * soon as a binary or categorical variable takes part.
 */
export function createCiTest(frame: Frame): CiTest {
  const continuous = frame.columns.map((c) => c.kind === 'continuous');
  const allContinuous = continuous.every(Boolean);
  const fz = createFisherZTest(frame);
  const mixed = allContinuous ? null : createMixedCiTest(frame);
  const cache = new Map<string, number>();
  let computed = 0;
  const sorted: number[] = [];
  return {
    get computed() {
      return computed;
    },
    family: allContinuous ? 'fisher-z' : 'mixed',
    pValue(i, j, cond) {
      const a = i < j ? i : j;
      const b = i < j ? j : i;
      sorted.length = 0;
      for (let t = 0; t < cond.length; t++) sorted.push(cond[t]);
      sorted.sort((u, v) => u - v);
      const key = `${a},${b}|${sorted.join(',')}`;
      const hit = cache.get(key);
      if (hit !== undefined) return hit;
      let useFz = continuous[a] && continuous[b];
      if (useFz && mixed) for (let t = 0; t < sorted.length; t++) if (!continuous[sorted[t]]) useFz = false;
      const p = useFz || !mixed ? fz.pValue(a, b, sorted) : mixed.pValue(a, b, sorted);
      computed++;
      cache.set(key, p);
      return p;
    },
  };
}
