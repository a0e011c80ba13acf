import { cam } from './cam.js';
import { directLingam } from './direct-lingam.js';
import type { Learner, LearnerName } from './learner.js';
import { linearNotears } from './notears-linear.js';
import { mlpNotears } from './notears-mlp.js';
import { pc } from './pc.js';

export type ConcreteLearnerName = Exclude<LearnerName, 'auto'>;

/**
 * Every graph learner by name ('auto' is a rule over these, see auto.ts). Options are
 * learner-specific; each learner validates its own.
 */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
export const LEARNERS: Readonly<Record<ConcreteLearnerName, Learner<any>>> = {
  pc,
  'direct-lingam': directLingam,
  'linear-notears': linearNotears,
  'mlp-notears': mlpNotears,
  cam,
};

/** Names `learn` accepts, 'auto' included. */
export const LEARNER_NAMES: readonly LearnerName[] = ['pc', 'direct-lingam', 'linear-notears', 'mlp-notears', 'cam', 'auto'];

/** The learner called `name`; a RangeError naming the known learners otherwise. */
export function getLearner(name: string): Learner<any> {
  const l = (LEARNERS as Record<string, Learner<any> | undefined>)[name];
  if (!l || typeof l.learn !== 'function') {
    throw new RangeError(`unknown learner "${name}"; known: ${LEARNER_NAMES.join(', ')}`);
  }
  return l;
}

/** Names of the learners that are implemented (have a `learn` function). */
export function availableLearners(): Set<ConcreteLearnerName> {
  const out = new Set<ConcreteLearnerName>();
  for (const [k, l] of Object.entries(LEARNERS)) if (l && typeof l.learn === 'function') out.add(k as ConcreteLearnerName);
  return out;
}
