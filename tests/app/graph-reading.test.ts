import { describe, expect, it } from 'vitest';
import { graphReading, OPEN_DIRECTION_SHARE } from '../../src/app/models/graph-reading.js';
import type { VersionGraph } from '../../src/jobs/compute-tasks.js';

const node = (name: string) => ({ name, kind: 'continuous' });

/** Edge probabilities chosen by hand; the expected classification is arithmetic on them. */
const graph: VersionGraph = {
  nodes: ['a', 'b', 'c', 'd', 'e', 'f', 'g', 'h'].map(node),
  edges: [
    { from: 'a', to: 'b', probability: 0.5 }, // with b→a 0.45: adjacent 0.95, minority 0.45 > 0.95/3 → open
    { from: 'b', to: 'a', probability: 0.45 },
    { from: 'c', to: 'd', probability: 0.85 }, // with d→c 0.15: minority 0.15 ≤ 1/3 → settled
    { from: 'd', to: 'c', probability: 0.15 },
    { from: 'e', to: 'f', probability: 0.3 }, // adjacent 0.45 < 0.5: not an adjacency of the set
    { from: 'f', to: 'e', probability: 0.15 },
    { from: 'h', to: 'g', probability: 0.3 }, // only the reverse listed first: g→h 0.6, h→g 0.3 → minority exactly 1/3 → settled
    { from: 'g', to: 'h', probability: 0.6 },
  ],
  graphs: [],
};

describe('graph reading', () => {
  it('lists the adjacencies whose less frequent direction holds over a third of their weight, more frequent direction first', () => {
    expect(OPEN_DIRECTION_SHARE).toBeCloseTo(1 / 3, 15);
    const r = graphReading(graph, 'cam');
    expect(r.undetermined).toHaveLength(1);
    expect(r.undetermined[0].between).toEqual(['a', 'b']);
    expect(r.undetermined[0].adjacent).toBeCloseTo(0.95, 12);
    expect(r.undetermined[0].split).toEqual([0.5, 0.45]);
    expect(r.cautions.at(-1)).toContain('a–b (50% one way, 45% the other)');
  });

  it('says what the probabilities measure and what the learner’s directions rest on', () => {
    const cam = graphReading(graph, 'cam').cautions;
    expect(cam[0]).toMatch(/not how likely it is to be causal/);
    expect(cam[1]).toMatch(/nonlinear mechanisms/);
    expect(graphReading(graph, 'direct-lingam').cautions[1]).toMatch(/non-Gaussian noise/);
    expect(graphReading(graph, 'pc').cautions[1]).toMatch(/v-structures/);
  });

  it('a given graph is an assumption: one caution, nothing open', () => {
    const r = graphReading(graph, 'fixed');
    expect(r.undetermined).toEqual([]);
    expect(r.cautions).toHaveLength(1);
    expect(r.cautions[0]).toMatch(/given with the model/);
  });
});
