/**
 * Treatment arms of an effect query. An arm is what happens to the treatment variable:
 *  - a value (number or level name): do(T = value);
 *  - `{ shift: d }` or `{ percent: q }`: T moves from its own value by d, or by q% (continuous T);
 *  - `{ policy: rules, otherwise }`: T set per unit by rules on pre-treatment variables;
 *  - `'observe'`: no intervention (the natural course).
 */
import type { CompiledModel } from '../scm/compiled-model.js';
import { KIND_CONTINUOUS } from '../scm/compiled-model.js';
import type { InterventionValue, PolicyRule, ResolvedRule } from '../scm/intervention.js';
import { conditionHolds, InterventionError, resolveIntervention, valueCode } from '../scm/intervention.js';

export type Arm =
  | InterventionValue
  | 'observe'
  | { readonly set: InterventionValue }
  | { readonly shift: number }
  | { readonly percent: number }
  | { readonly policy: readonly PolicyRule[]; readonly otherwise: InterventionValue };

export const ARM_OBSERVE = 0;
export const ARM_SET = 1;
export const ARM_SHIFT = 2;
export const ARM_SCALE = 3;
export const ARM_POLICY = 4;

/** An arm resolved against the treatment variable. */
export interface ResolvedArm {
  readonly label: string;
  readonly action: number;
  /** Set value (code for discrete), shift amount or scale factor. */
  readonly amount: number;
  readonly rules: readonly ResolvedRule[];
  readonly otherwise: number;
  /** Variables the policy reads (to check they are pre-treatment). */
  readonly reads: readonly number[];
}

/** A stable text key of an arm (for caches and labels). */
export function armKey(arm: Arm): string {
  return typeof arm === 'object' ? JSON.stringify(arm) : `${typeof arm}:${arm}`;
}

/** Human label of an arm. */
export function armLabel(arm: Arm): string {
  if (arm === 'observe') return 'observe';
  if (typeof arm !== 'object') return String(arm);
  if ('set' in arm) return String(arm.set);
  if ('shift' in arm) return `shift ${arm.shift >= 0 ? '+' : ''}${arm.shift}`;
  if ('percent' in arm) return `shift ${arm.percent >= 0 ? '+' : ''}${arm.percent}%`;
  return 'policy';
}

/**
 * `code` when a discrete treatment t takes it in some reference row; else an InterventionError:
 * no unit in the data was under that arm, so its outcomes would be extrapolated from nothing
 * (a level declared but never seen). A continuous treatment's values pass: how far a set value
 * lies from the data is for the cautions.
 */
function observedCode(model: CompiledModel, t: number, code: number): number {
  if (model.kinds[t] === KIND_CONTINUOUS) return code;
  const R = model.nReference;
  const col = model.referenceValues.subarray(t * R, (t + 1) * R);
  if (col.includes(code)) return code;
  const seen = [...new Set(col)].sort((a, b) => a - b).map((c) => model.levels[t]?.[c] ?? String(c));
  const label = model.levels[t]?.[code] ?? String(code);
  throw new InterventionError(`no row of the data has "${model.names[t]}" = ${label}, so there is nothing to estimate that arm from; compare arms the data contain (${seen.join(', ')})`);
}

/** Resolve an arm on treatment variable t (throws InterventionError on bad values). */
export function resolveArm(model: CompiledModel, t: number, arm: Arm): ResolvedArm {
  const base = { label: armLabel(arm), rules: [] as ResolvedRule[], otherwise: NaN, reads: [] as number[] };
  if (arm === 'observe') {
    // A level literally named "observe" wins over the keyword.
    const lv = model.levels[t];
    if (!(lv && lv.includes('observe'))) return { ...base, action: ARM_OBSERVE, amount: NaN };
  }
  if (typeof arm !== 'object') return { ...base, action: ARM_SET, amount: observedCode(model, t, valueCode(model, t, arm)) };
  if ('set' in arm) return { ...base, action: ARM_SET, amount: observedCode(model, t, valueCode(model, t, arm.set)) };
  if ('shift' in arm || 'percent' in arm) {
    if (model.kinds[t] !== KIND_CONTINUOUS) throw new InterventionError(`treatment "${model.names[t]}" is not continuous: it can be set, not shifted`);
    if ('shift' in arm) {
      if (!Number.isFinite(arm.shift)) throw new InterventionError('shift amount must be finite');
      return { ...base, action: ARM_SHIFT, amount: arm.shift };
    }
    if (!Number.isFinite(arm.percent)) throw new InterventionError('shift percent must be finite');
    return { ...base, action: ARM_SCALE, amount: 1 + arm.percent / 100 };
  }
  const res = resolveIntervention(model, { type: 'policy', variable: model.names[t], rules: arm.policy, otherwise: arm.otherwise });
  const pol = res.policies.get(t)!;
  const reads = new Set<number>();
  for (const r of pol.rules) for (const c of r.conditions) reads.add(c.variable);
  return { ...base, action: ARM_POLICY, amount: NaN, rules: pol.rules, otherwise: pol.otherwise, reads: [...reads] };
}

/**
 * Writes treatment t's column under `arm` into `work` (columns of N units each), from the
 * factual values `from` (same layout): left as it is for 'observe', set, shifted, scaled, or set
 * per unit by the policy's first matching rule. The caller checks that a policy reads only
 * pre-treatment variables.
 */
export function armTreatmentColumn(arm: ResolvedArm, t: number, from: Float64Array, work: Float64Array, N: number): void {
  const c = t * N;
  switch (arm.action) {
    case ARM_OBSERVE:
      return;
    case ARM_SET:
      work.fill(arm.amount, c, c + N);
      return;
    case ARM_SHIFT:
      for (let u = 0; u < N; u++) work[c + u] = from[c + u] + arm.amount;
      return;
    case ARM_SCALE:
      for (let u = 0; u < N; u++) work[c + u] = from[c + u] * arm.amount;
      return;
    case ARM_POLICY:
      for (let u = 0; u < N; u++) {
        let val = arm.otherwise;
        for (const rule of arm.rules) {
          let ok = true;
          for (const cond of rule.conditions) if (!conditionHolds(cond, from[cond.variable * N + u])) ok = false;
          if (ok) {
            val = rule.value;
            break;
          }
        }
        work[c + u] = val;
      }
      return;
    default:
      throw new RangeError(`unknown arm action ${arm.action}`);
  }
}
