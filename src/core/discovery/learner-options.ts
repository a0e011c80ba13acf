/**
 * Checking the options a caller gives `learn` before any work starts: a misspelt or misplaced
 * option must be refused with its name, not ignored (an ignored "candidate: 10" would silently
 * run the slow default), and a value of the wrong type must not slip through JavaScript's
 * coercion ("0.05" > 0 is true).
 */
import type { LearnerName } from './learner.js';
import { getLearner, LEARNERS } from './registry.js';

/** learn()'s own options (learn.ts), with their defaults: they apply whatever the learner. */
const LEARN_OWN: Readonly<Record<string, unknown>> = { missing: 'mean-mode', standardise: true };
const IMPUTE_SCHEMES = ['mean-mode', 'drop-rows'];

/** Options that callers do not set through the learner's options, and where they come from. */
const SET_ELSEWHERE: Readonly<Record<string, string>> = {
  learner: 'name the learner on its own, not among its options',
  seed: 'the seed is set on its own, not among the learner options',
  copyOf: 'copyOf is set by the bootstrap, not by callers',
};

const typeName = (v: unknown): string => (Array.isArray(v) ? 'a list' : typeof v === 'boolean' ? 'true or false' : typeof v === 'number' ? 'a number' : `a ${typeof v}`);
const sameType = (a: unknown, b: unknown): boolean => (Array.isArray(a) ? Array.isArray(b) : typeof a === typeof b);

/**
 * Throws a RangeError or TypeError naming the option when learner `name` would not accept
 * `options` (learner-specific ones and learn()'s own `missing` and `standardise`): an unknown
 * name (listing the known ones), a value of another type than the default's, or a value the
 * learner refuses. For 'auto', an option must belong to some learner and is checked by every
 * learner that has it; the learner auto picks later uses the ones it has (optionsFor).
 */
export function checkLearnerOptions(name: LearnerName, options: Readonly<Record<string, unknown>>): void {
  const learners = name === 'auto' ? Object.values(LEARNERS) : [getLearner(name)];
  for (const [key, value] of Object.entries(options)) {
    if (Object.hasOwn(SET_ELSEWHERE, key)) throw new RangeError(`option "${key}": ${SET_ELSEWHERE[key]}`);
    if (Object.hasOwn(LEARN_OWN, key)) {
      if (!sameType(LEARN_OWN[key], value)) throw new TypeError(`option "${key}" must be ${typeName(LEARN_OWN[key])}, got ${JSON.stringify(value)}`);
      if (key === 'missing' && !IMPUTE_SCHEMES.includes(value as string)) {
        throw new RangeError(`option "missing" must be one of ${IMPUTE_SCHEMES.join(', ')}, got ${JSON.stringify(value)}`);
      }
      continue;
    }
    const owners = learners.filter((l) => Object.hasOwn(l.defaults, key));
    if (owners.length === 0) {
      const known = name === 'auto' ? [...new Set(learners.flatMap((l) => Object.keys(l.defaults)))] : Object.keys(learners[0].defaults);
      throw new RangeError(`unknown option "${key}" for learner ${name}; its options are ${[...known, ...Object.keys(LEARN_OWN)].sort().join(', ')}`);
    }
    for (const l of owners) {
      const d = (l.defaults as Record<string, unknown>)[key];
      if (!sameType(d, value)) throw new TypeError(`${l.name}: option "${key}" must be ${typeName(d)}, got ${JSON.stringify(value)}`);
    }
  }
  for (const l of learners) {
    const own = Object.fromEntries(Object.entries(options).filter(([k]) => Object.hasOwn(l.defaults, k)));
    if (Object.keys(own).length > 0) l.checkOptions(own);
  }
}

/**
 * Splits checked options for the concrete learner `name`: the ones it takes (learn()'s own
 * included) and the names of those meant for other learners (given with 'auto', which chose
 * this one).
 */
export function optionsFor(name: Exclude<LearnerName, 'auto'>, options: Readonly<Record<string, unknown>>): { used: Record<string, unknown>; unused: string[] } {
  const defaults = getLearner(name).defaults as Record<string, unknown>;
  const used: Record<string, unknown> = {};
  const unused: string[] = [];
  for (const [k, v] of Object.entries(options)) {
    if (Object.hasOwn(defaults, k) || Object.hasOwn(LEARN_OWN, k)) used[k] = v;
    else unused.push(k);
  }
  return { used, unused };
}
