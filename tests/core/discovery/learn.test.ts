import { describe, expect, it } from 'vitest';
import { makeFrame, type Frame } from '../../../src/core/frame/frame.js';
import type { Knowledge } from '../../../src/core/discovery/knowledge.js';
import { compileKnowledge } from '../../../src/core/discovery/knowledge.js';
import { checkResult, learn, LearnerContractError } from '../../../src/core/discovery/learn.js';
import { availableLearners } from '../../../src/core/discovery/registry.js';
import { Rng } from '../../../src/core/random/rng.js';

const NAMES = ['a', 'b', 'c', 'd', 'e'];

/** a→b, a→c, b→d, c→d, d→e, linear with Laplace noise; column scales deliberately unequal. */
function data(n: number, seed: number): Frame {
  const rng = Rng.create(seed);
  const lap = () => {
    const u = rng.uniform() - 0.5;
    return -Math.sign(u) * Math.log(1 - 2 * Math.abs(u));
  };
  const cols = NAMES.map(() => new Float64Array(n));
  const [a, b, c, d, e] = cols;
  for (let r = 0; r < n; r++) {
    a[r] = lap();
    b[r] = 0.8 * a[r] + lap();
    c[r] = -0.7 * a[r] + lap();
    d[r] = 0.9 * b[r] + 0.8 * c[r] + lap();
    e[r] = 5 * (0.7 * d[r] + lap());
  }
  return makeFrame(cols.map((values, j) => ({ name: NAMES[j], kind: 'continuous' as const, values })));
}

const learners = [...availableLearners()].sort();

/**
 * Per-learner options that keep this file fast: the MLP learner with few hidden units and
 * short solves (these tests check the front door's contract, not recovery).
 */
const FAST: Record<string, Record<string, unknown>> = {
  'mlp-notears': { hidden: 4, maxOuter: 6, maxInner: 40 },
};
const opts = (learner: string, seed: number) => ({ learner: learner as never, seed, ...(FAST[learner] ?? {}) });

describe('learn(frame, knowledge, options)', () => {
  it('has at least PC and DirectLiNGAM registered', () => {
    expect(learners).toEqual(expect.arrayContaining(['pc', 'direct-lingam']));
  });

  it('fills missing cells and reports rows and cells affected', () => {
    const f = data(400, 1);
    const holes: Array<[number, number]> = [[0, 3], [2, 3], [4, 10], [1, 50]]; // (column, row): rows 3, 10, 50
    const cols = f.columns.map((c) => ({ ...c, values: c.values.slice() }));
    for (const [c, r] of holes) cols[c].values[r] = NaN;
    const g = makeFrame(cols);
    const res = learn(g, {}, { learner: 'pc' });
    expect(res.missing).toEqual({ scheme: 'mean-mode', rowsAffected: 3, cellsAffected: 4 });
    const dropped = learn(g, {}, { learner: 'direct-lingam', missing: 'drop-rows' });
    expect(dropped.missing).toEqual({ scheme: 'drop-rows', rowsAffected: 3, cellsAffected: 4 });
    expect(learn(f, {}, { learner: 'pc' }).missing.cellsAffected).toBe(0);
  });

  it('standardises continuous columns: rescaling columns does not change any graph', () => {
    // Scales are powers of two, so the standardised frames are bit-identical and even the
    // iterative learners must agree exactly; without standardisation the score-based learners
    // would see very different variances.
    const f = data(400, 2);
    const scaled = makeFrame(f.columns.map((c, j) => ({ ...c, values: c.values.map((v) => v * (j % 2 === 1 ? 1024 : 1 / 128)) })));
    for (const learner of learners) {
      const a = learn(f, {}, opts(learner, 3));
      const b = learn(scaled, {}, opts(learner, 3));
      expect(Array.from(b.graph.adj), learner).toEqual(Array.from(a.graph.adj));
    }
  });

  it('DirectLiNGAM through the front door recovers the DAG (weights in sd units)', () => {
    const res = learn(data(3000, 4), {}, { learner: 'direct-lingam' });
    const got = res.graph.adj;
    const want = [[0, 1], [0, 2], [1, 3], [2, 3], [3, 4]];
    const expected = new Uint8Array(25);
    for (const [i, j] of want) expected[i * 5 + j] = 1;
    expect(Array.from(got)).toEqual(Array.from(expected));
  });

  it('same seed → same graph, for every learner', () => {
    const f = data(300, 5);
    for (const learner of [...learners, 'auto' as const]) {
      const a = learn(f, {}, opts(learner, 11));
      const b = learn(f, {}, opts(learner, 11));
      expect(Array.from(a.graph.adj), learner).toEqual(Array.from(b.graph.adj));
      expect(a.notes).toEqual(b.notes);
    }
  });

  it('auto says which learner it chose and why', () => {
    const res = learn(data(2000, 6), {}, { learner: 'auto' });
    expect(res.learner).toBe('direct-lingam');
    expect(res.notes[0]).toMatch(/^auto: /);
    expect(res.notes.some((n) => n === 'auto: chose direct-lingam')).toBe(true);
  });

  it('property: no learner ever outputs a forbidden edge or drops a required one (random knowledge)', () => {
    const f = data(300, 7);
    const rng = Rng.create(8);
    for (let trial = 0; trial < 6; trial++) {
      const perm = [...NAMES];
      rng.shuffle(perm);
      const tiers = trial % 2 === 0 ? undefined : [perm.slice(0, 2), perm.slice(2, 4)];
      const tier = (x: string) => (tiers ? tiers.findIndex((t) => t.includes(x)) : -1);
      // One required edge, never against the tiers; random forbidden edges, never the required one.
      let req: [string, string] = [perm[0], perm[4]];
      if (tier(req[0]) >= 0 && tier(req[1]) >= 0 && tier(req[0]) > tier(req[1])) req = [req[1], req[0]];
      const forbidden: Array<[string, string]> = [];
      for (const x of NAMES) for (const y of NAMES) if (x !== y && !(x === req[0] && y === req[1]) && rng.uniform() < 0.3) forbidden.push([x, y]);
      const knowledge: Knowledge = tiers ? { forbidden, tiers, required: [req] } : { forbidden, required: [req] };
      // The forbidden marks computed here, independently of compileKnowledge.
      const bad = new Set(forbidden.map(([x, y]) => `${x}→${y}`));
      if (tiers) for (const x of tiers[1]) for (const y of tiers[0]) bad.add(`${x}→${y}`);
      const [ri, rj] = [NAMES.indexOf(req[0]), NAMES.indexOf(req[1])];
      for (const learner of learners) {
        const res = learn(f, knowledge, opts(learner, trial));
        for (let i = 0; i < 5; i++) {
          for (let j = 0; j < 5; j++) {
            if (res.graph.adj[i * 5 + j] === 1) expect(bad.has(`${NAMES[i]}→${NAMES[j]}`), `${learner} ${NAMES[i]}→${NAMES[j]}`).toBe(false);
          }
        }
        expect([res.graph.adj[ri * 5 + rj], res.graph.adj[rj * 5 + ri]], `${learner} required ${req.join('→')}`).toEqual([1, 0]);
      }
    }
  });

  it('rejects an unknown learner and a result that breaks the knowledge', () => {
    const f = data(100, 9);
    expect(() => learn(f, {}, { learner: 'nope' as never })).toThrow(/unknown learner "nope"/);
    const k = compileKnowledge(NAMES, { forbidden: [['a', 'b']], required: [['c', 'd']] });
    const adj = new Uint8Array(25);
    adj[0 * 5 + 1] = 1; // a→b forbidden
    const fake = { learner: 'pc' as const, kind: 'dag' as const, graph: { n: 5, names: NAMES, adj }, notes: [], missing: { scheme: 'none', rowsAffected: 0, cellsAffected: 0 } };
    expect(() => checkResult(fake, k)).toThrow(LearnerContractError);
    expect(() => checkResult(fake, k)).toThrow(/forbidden a→b present; required c→d missing/);
  });

  it('passes copyOf to the learner, subset to the rows listwise deletion keeps', () => {
    const f = data(60, 10);
    expect(() => learn(f, {}, { learner: 'pc', copyOf: new Int32Array(59) })).toThrow(/copyOf must be an Int32Array with one entry per row \(60\)/);
    // Rows 0..29 copy observation 0..29 twice over; drop row 5 (a missing cell): cam then sees
    // 59 rows and a copyOf of 59 entries (were it not subset, cam would refuse its length).
    const withGap = { ...f, columns: f.columns.map((c, k) => (k === 0 ? { ...c, values: Float64Array.from(c.values, (v, r) => (r === 5 ? NaN : v)) } : c)) };
    const copyOf = Int32Array.from({ length: 60 }, (_, r) => r % 30);
    const res = learn(withGap, {}, { learner: 'cam', missing: 'drop-rows', copyOf });
    expect(res.missing.rowsAffected).toBe(1);
    expect(res.notes.join(' ')).toMatch(/on 59 rows/);
  });
});
