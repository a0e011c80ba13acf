import { describe, expect, it } from 'vitest';
import { argsort } from '../../../src/core/stats/argsort.js';
import { Rng } from '../../../src/core/random/rng.js';

describe('argsort', () => {
  it("orders indices as the engine's stable Array.prototype.sort does, ties included", () => {
    const rng = Rng.create(4);
    for (const n of [0, 1, 2, 3, 7, 64, 1000, 2049]) {
      // Few distinct values, so most comparisons are ties.
      const v = Float64Array.from({ length: n }, () => rng.int(Math.max(1, n >> 3)) - 0.5 * rng.int(2));
      const want = Array.from({ length: n }, (_, i) => i).sort((a, b) => v[a] - v[b]);
      expect(Array.from(argsort(v))).toEqual(want);
    }
  });
});
