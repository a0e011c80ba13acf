import { describe, it, expect } from 'vitest';
import { graphFromEdges, emptyGraph, shd, edgeScores, dagToCpdag } from '../../../src/core/graph/index.js';

const nm = ['a', 'b', 'c'];

describe('shd and edgeScores', () => {
  it('counts a missing, extra, or reversed edge as 1 each', () => {
    const truth = graphFromEdges(nm, [['a', 'b'], ['b', 'c']]);
    // ab right, bc reversed, ac extra ⇒ SHD 2
    const est = graphFromEdges(nm, [['a', 'b'], ['c', 'b'], ['a', 'c']]);
    expect(shd(est, truth)).toBe(2);
    expect(shd(truth, est)).toBe(2);
    expect(shd(truth, truth)).toBe(0);
    expect(shd(emptyGraph(nm), truth)).toBe(2);
    // an undirected estimate of a directed edge differs in its mark: 1
    expect(shd(graphFromEdges(nm, [['a', 'b'], ['b', 'a'], ['b', 'c']]), truth)).toBe(1);
  });

  it('precision, recall and F1 by hand', () => {
    const truth = graphFromEdges(nm, [['a', 'b'], ['b', 'c']]);
    const est = graphFromEdges(nm, [['a', 'b'], ['c', 'b'], ['a', 'c']]);
    const s = edgeScores(est, truth);
    // adjacency: 2 of 3 predicted pairs are true, both true pairs found
    expect(s.adjPrecision).toBeCloseTo(2 / 3, 15);
    expect(s.adjRecall).toBe(1);
    expect(s.adjF1).toBeCloseTo(0.8, 15);
    // orientation: only a→b matches: P = 1/3, R = 1/2, F1 = 2·(1/6)/(5/6) = 0.4
    expect(s.orientPrecision).toBeCloseTo(1 / 3, 15);
    expect(s.orientRecall).toBe(0.5);
    expect(s.orientF1).toBeCloseTo(0.4, 15);
    expect(s.shd).toBe(2);
  });

  it('edge cases: empty estimate scores 0 F1; a CPDAG scored against the CPDAG of the truth is perfect', () => {
    const truth = graphFromEdges(nm, [['a', 'b'], ['b', 'c']]);
    const e = edgeScores(emptyGraph(nm), truth);
    expect(e.adjF1).toBe(0);
    expect(e.orientF1).toBe(0);
    expect(edgeScores(emptyGraph(nm), emptyGraph(nm)).adjF1).toBe(1);
    const cp = dagToCpdag(truth);
    expect(edgeScores(cp, cp).orientF1).toBe(1);
    // the same CPDAG against the DAG: adjacencies right, orientations not identified
    const vsDag = edgeScores(cp, truth);
    expect(vsDag.adjF1).toBe(1);
    expect(vsDag.orientF1).toBe(0);
  });
});
