import { describe, expect, it } from 'vitest';
import { makeFrame, type Frame } from '../../../src/core/frame/frame.js';
import { KnowledgeError } from '../../../src/core/discovery/knowledge.js';
import { learn } from '../../../src/core/discovery/learn.js';
import { Rng } from '../../../src/core/random/rng.js';

function frame(names: string[], n = 200): Frame {
  const rng = Rng.create(9);
  return makeFrame(names.map((name) => ({ name, kind: 'continuous' as const, values: Float64Array.from({ length: n }, () => rng.normal()) })));
}

function thrown(fn: () => unknown): KnowledgeError {
  try {
    fn();
  } catch (e) {
    if (e instanceof KnowledgeError) return e;
    throw e;
  }
  throw new Error('expected a KnowledgeError');
}

describe('contradictory knowledge is rejected before learning, naming the edges', () => {
  const f = frame(['x', 'y', 'z', 'w']);
  for (const learner of ['pc', 'direct-lingam', 'auto'] as const) {
    it(`${learner}: a required edge against the tiers`, () => {
      const e = thrown(() => learn(f, { tiers: [['x'], ['y']], required: [['y', 'x']] }, { learner }));
      expect(e.edges).toEqual([['y', 'x']]);
      expect(e.message).toContain('y→x');
    });
  }

  it('required edges forming a cycle', () => {
    const e = thrown(() => learn(f, { required: [['x', 'y'], ['y', 'z'], ['z', 'x'], ['x', 'w']] }, { learner: 'pc' }));
    const named = e.edges.map(([a, b]) => `${a}→${b}`).sort();
    expect(named).toEqual(['x→y', 'y→z', 'z→x']);
    expect(e.message).toMatch(/cycle/);
  });

  it('an edge both required and forbidden, and an unknown variable', () => {
    const e = thrown(() => learn(f, { required: [['x', 'y']], forbidden: [['x', 'y']] }, { learner: 'direct-lingam' }));
    expect(e.edges).toEqual([['x', 'y']]);
    expect(() => learn(f, { forbidden: [['x', 'nope']] }, { learner: 'pc' })).toThrow(/unknown variable "nope"/);
  });
});
