/**
 * Interventions on a compiled model, in a small serialisable (JSON) form.
 *
 *  - `set`:    do(X = a). A categorical or binary X takes a level name (or its numeric code).
 *  - `shift`:  X keeps its own mechanism and noise, then moves by `by` (X + d) or by
 *              `percent` (X · (1 + percent/100)); continuous X only.
 *  - `policy`: X is set per unit by the first rule whose conditions all hold, else by
 *              `otherwise`. Conditions read pre-treatment variables only: every variable a rule
 *              reads must be a non-descendant of X in the graph simulated (checked per graph;
 *              `InterventionError` otherwise).
 *  - `observe`: no intervention (the natural arm).
 * Several variables at once: `{ type: 'joint', parts: [...] }` (parts on distinct variables).
 */
import type { CompiledModel } from './compiled-model.js';
import { KIND_CONTINUOUS } from './compiled-model.js';
import { QueryRefusalError } from './query-refusal.js';

/** A value for a variable: a number (continuous value, or a code 0..k-1) or a level name. */
export type InterventionValue = number | string;

/** One condition of a policy rule on a pre-treatment variable. */
export type PolicyCondition =
  /** Holds when the (discrete) variable's level is one of `in` (names or codes). */
  | { readonly variable: string; readonly in: readonly InterventionValue[] }
  /** Holds when min ≤ value < max (either bound may be null = open). */
  | { readonly variable: string; readonly range: readonly [number | null, number | null] };

/** A rule: if every condition holds, set the treatment to `then`. */
export interface PolicyRule {
  readonly if: PolicyCondition | readonly PolicyCondition[];
  readonly then: InterventionValue;
}

export type Intervention =
  | { readonly type: 'observe' }
  | { readonly type: 'set'; readonly variable: string; readonly value: InterventionValue }
  | { readonly type: 'shift'; readonly variable: string; readonly by: number }
  | { readonly type: 'shift'; readonly variable: string; readonly percent: number }
  | {
      readonly type: 'policy';
      readonly variable: string;
      readonly rules: readonly PolicyRule[];
      readonly otherwise: InterventionValue;
    }
  | { readonly type: 'joint'; readonly parts: readonly Intervention[] };

/** An intervention the model cannot carry out (unknown variable or level, shift of a discrete variable, policy reading a descendant). */
export class InterventionError extends QueryRefusalError {
  constructor(message: string) {
    super(message);
    this.name = 'InterventionError';
  }
}

/** Action codes of a resolved intervention, per variable. */
export const ACT_NONE = 0;
export const ACT_SET = 1;
export const ACT_SHIFT = 2;
export const ACT_SCALE = 3;
export const ACT_POLICY = 4;

/** A condition resolved to a variable index: discrete `codes` mask, or numeric [lo, hi). */
export interface ResolvedCondition {
  readonly variable: number;
  /** For level sets: mask over codes (length = number of levels); null for a range. */
  readonly codes: Uint8Array | null;
  readonly lo: number;
  readonly hi: number;
}

export interface ResolvedRule {
  readonly conditions: readonly ResolvedCondition[];
  readonly value: number;
}

/** An intervention resolved against a model's variables: one action per variable. */
export interface ResolvedIntervention {
  /** ACT_* per variable (length p). */
  readonly action: Uint8Array;
  /** Set value / shift amount / scale factor per variable (NaN where unused). */
  readonly amount: Float64Array;
  /** Policy rules and default per variable index (only for ACT_POLICY). */
  readonly policies: ReadonlyMap<number, { readonly rules: readonly ResolvedRule[]; readonly otherwise: number }>;
  /** Variables the intervention targets. */
  readonly targets: readonly number[];
}

/** Index of a variable by name, or an InterventionError that lists the known names. */
export function variableIndexOf(model: CompiledModel, name: string): number {
  const i = model.names.indexOf(name);
  if (i < 0) throw new InterventionError(`unknown variable "${name}"; known: ${model.names.join(', ')}`);
  return i;
}

/** The numeric value (a continuous value or a level code) of `value` for variable j. */
export function valueCode(model: CompiledModel, j: number, value: InterventionValue): number {
  const name = model.names[j];
  if (model.kinds[j] === KIND_CONTINUOUS) {
    if (typeof value !== 'number' || !Number.isFinite(value)) {
      throw new InterventionError(`variable "${name}" is continuous: give a finite number, got ${JSON.stringify(value)}`);
    }
    return value;
  }
  const k = model.nLevels[j];
  const levels = model.levels[j];
  if (typeof value === 'string') {
    const c = levels ? levels.indexOf(value) : -1;
    if (c < 0) {
      const known = levels ? levels.join(', ') : '0, 1';
      throw new InterventionError(`variable "${name}" has no level "${value}"; levels: ${known}`);
    }
    return c;
  }
  if (!Number.isInteger(value) || value < 0 || value >= k) {
    throw new InterventionError(`variable "${name}" takes a level name or a code 0..${k - 1}, got ${value}`);
  }
  return value;
}

/** Resolve names and level labels of an intervention against the model's variables. */
export function resolveIntervention(model: CompiledModel, iv: Intervention): ResolvedIntervention {
  const action = new Uint8Array(model.p);
  const amount = new Float64Array(model.p).fill(NaN);
  const policies = new Map<number, { rules: ResolvedRule[]; otherwise: number }>();
  const targets: number[] = [];
  const add = (x: Intervention): void => {
    if (x.type === 'observe') return;
    if (x.type === 'joint') {
      for (const part of x.parts) add(part);
      return;
    }
    const j = variableIndexOf(model, x.variable);
    if (action[j] !== ACT_NONE) throw new InterventionError(`variable "${x.variable}" is intervened on twice`);
    targets.push(j);
    if (x.type === 'set') {
      action[j] = ACT_SET;
      amount[j] = valueCode(model, j, x.value);
    } else if (x.type === 'shift') {
      if (model.kinds[j] !== KIND_CONTINUOUS) {
        throw new InterventionError(`variable "${x.variable}" is not continuous: it can be set, not shifted`);
      }
      if ('percent' in x) {
        if (!Number.isFinite(x.percent)) throw new InterventionError(`shift percent must be finite`);
        action[j] = ACT_SCALE;
        amount[j] = 1 + x.percent / 100;
      } else {
        if (!Number.isFinite(x.by)) throw new InterventionError(`shift amount must be finite`);
        action[j] = ACT_SHIFT;
        amount[j] = x.by;
      }
    } else {
      action[j] = ACT_POLICY;
      const rules: ResolvedRule[] = [];
      for (const rule of x.rules) {
        const conds = Array.isArray(rule.if) ? (rule.if as readonly PolicyCondition[]) : [rule.if as PolicyCondition];
        rules.push({ conditions: conds.map((c) => resolveCondition(model, c)), value: valueCode(model, j, rule.then) });
      }
      policies.set(j, { rules, otherwise: valueCode(model, j, x.otherwise) });
    }
  };
  add(iv);
  return { action, amount, policies, targets };
}

function resolveCondition(model: CompiledModel, c: PolicyCondition): ResolvedCondition {
  const v = variableIndexOf(model, c.variable);
  if ('in' in c) {
    if (model.kinds[v] === KIND_CONTINUOUS) {
      throw new InterventionError(`policy condition on continuous "${c.variable}" needs a range, not a level set`);
    }
    const codes = new Uint8Array(model.nLevels[v]);
    for (const lv of c.in) codes[valueCode(model, v, lv)] = 1;
    return { variable: v, codes, lo: NaN, hi: NaN };
  }
  const [lo, hi] = c.range;
  return { variable: v, codes: null, lo: lo ?? -Infinity, hi: hi ?? Infinity };
}

/** Whether a resolved condition holds for value x of its variable. */
export function conditionHolds(c: ResolvedCondition, x: number): boolean {
  if (c.codes !== null) return c.codes[x] === 1;
  return x >= c.lo && x < c.hi;
}
