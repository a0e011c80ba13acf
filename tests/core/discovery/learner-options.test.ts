import { describe, expect, it } from 'vitest';
import { learn } from '../../../src/core/discovery/learn.js';
import { checkLearnerOptions, optionsFor } from '../../../src/core/discovery/learner-options.js';
import { LEARNERS } from '../../../src/core/discovery/registry.js';
import { makeFrame } from '../../../src/core/frame/frame.js';
import { Rng } from '../../../src/core/random/rng.js';

/** x → y → z, linear with uniform noise: `auto` picks DirectLiNGAM for such data (auto.ts). */
function linearUniform(n: number, seed: number) {
  const rng = Rng.create(seed);
  const u = () => 2 * Math.sqrt(3) * (rng.uniform() - 0.5);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const z = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    x[r] = u();
    y[r] = 0.8 * x[r] + u();
    z[r] = -0.9 * y[r] + u();
  }
  return makeFrame([
    { name: 'x', kind: 'continuous', values: x },
    { name: 'y', kind: 'continuous', values: y },
    { name: 'z', kind: 'continuous', values: z },
  ]);
}

describe('learner options', () => {
  it('every learner accepts its own defaults', () => {
    for (const l of Object.values(LEARNERS)) expect(() => checkLearnerOptions(l.name, l.defaults as Record<string, unknown>)).not.toThrow();
  });

  it('refuses an unknown name, listing the known ones, and an option of another learner', () => {
    expect(() => checkLearnerOptions('cam', { candidate: 10 })).toThrow(/unknown option "candidate" for learner cam; its options are .*candidates/);
    expect(() => checkLearnerOptions('pc', { candidates: 10 })).toThrow(/unknown option "candidates" for learner pc/);
    expect(() => checkLearnerOptions('auto', { nonsense: 1 })).toThrow(/unknown option "nonsense" for learner auto/);
  });

  it('refuses a value of another type than the default, which coercion would let through', () => {
    // "0.05" > 0 && "0.05" < 1 is true in JavaScript: the type check is what stops it.
    expect(() => checkLearnerOptions('pc', { alpha: '0.05' })).toThrow(/pc: option "alpha" must be a number, got "0.05"/);
    expect(() => checkLearnerOptions('linear-notears', { localSearch: 'yes' })).toThrow(/must be true or false/);
    expect(() => checkLearnerOptions('cam', { missing: 'median' })).toThrow(/"missing" must be one of mean-mode, drop-rows/);
  });

  it('passes values on to the learner’s own check, and for auto to every learner that has the option', () => {
    expect(() => checkLearnerOptions('cam', { candidates: 0 })).toThrow(/cam: candidates must be an integer ≥ 1, got 0/);
    // threshold belongs to both NOTEARS learners: a negative one is refused whichever auto picks.
    expect(() => checkLearnerOptions('auto', { threshold: -1 })).toThrow(/notears: threshold must be ≥ 0, got -1/);
    expect(() => checkLearnerOptions('auto', { candidates: 10, alpha: 0.05, missing: 'drop-rows' })).not.toThrow();
  });

  it('refuses the options that are set elsewhere', () => {
    expect(() => checkLearnerOptions('pc', { seed: 1 })).toThrow(/seed is set on its own/);
    expect(() => checkLearnerOptions('auto', { learner: 'pc' })).toThrow(/name the learner on its own/);
  });

  it('optionsFor keeps the chosen learner’s options and learn()’s own, and names the rest', () => {
    expect(optionsFor('pc', { alpha: 0.05, candidates: 10, standardise: false })).toEqual({ used: { alpha: 0.05, standardise: false }, unused: ['candidates'] });
  });

  it('learn refuses a misspelt option before any work, and under auto notes the options the chosen learner does not take', () => {
    const frame = linearUniform(400, 5);
    expect(() => learn(frame, {}, { learner: 'pc', alpah: 0.05 })).toThrow(/unknown option "alpah"/);
    const res = learn(frame, {}, { learner: 'auto', seed: 1, candidates: 10, gamma: 1 });
    expect(res.learner).toBe('direct-lingam');
    expect(res.notes).toContain('auto: option(s) candidates are not options of direct-lingam and were not used');
  });
});
