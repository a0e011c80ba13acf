/**
 * Policies inside a simulation pass: the per-unit rule evaluation, and the node order that puts
 * each policy's condition variables before its treatment (refusing conditions on descendants).
 */
import type { CompiledModel } from './compiled-model.js';
import { type ResolvedIntervention, InterventionError, conditionHolds } from './intervention.js';
import { descendantMask, orderOf } from './model-access.js';

/** Set treatment j of every unit from the first rule whose conditions hold (else the default). */
export function applyPolicy(iv: ResolvedIntervention, j: number, values: Float64Array, n: number): void {
  const pol = iv.policies.get(j);
  if (pol === undefined) throw new InterventionError(`policy for variable ${j} is missing`);
  const col = j * n;
  const rules = pol.rules;
  for (let i = 0; i < n; i++) {
    let v = pol.otherwise;
    for (let r = 0; r < rules.length; r++) {
      const conds = rules[r].conditions;
      let ok = true;
      for (let c = 0; c < conds.length && ok; c++) ok = conditionHolds(conds[c], values[conds[c].variable * n + i]);
      if (ok) {
        v = rules[r].value;
        break;
      }
    }
    values[col + i] = v;
  }
}

/** Graph g's stored order, or (with policies) an order where each policy's condition variables precede its target. */
export function passOrder(model: CompiledModel, g: number, iv: ResolvedIntervention): Int32Array {
  const p = model.p;
  if (iv.policies.size === 0) return model.topoOrder.subarray(g * p, g * p + p);
  const extra: Array<[number, number]> = [];
  for (const [j, pol] of iv.policies) {
    const desc = descendantMask(model, g, [j]);
    for (const rule of pol.rules) {
      for (const c of rule.conditions) {
        if (c.variable === j || desc[c.variable] === 1) {
          throw new InterventionError(
            `policy for "${model.names[j]}" reads "${model.names[c.variable]}", which is ${c.variable === j ? 'the treatment itself' : `a descendant of "${model.names[j]}" in graph ${g}`}: a policy may only read pre-treatment variables`,
          );
        }
        extra.push([c.variable, j]);
      }
    }
  }
  const order = orderOf(model.adjacency, g * p * p, p, extra);
  if (order === null) throw new InterventionError(`the policies' conditions form a cycle with the treatments in graph ${g}`);
  return order;
}

/** Every variable the intervention's policies read. */
export function policyVariables(iv: ResolvedIntervention): number[] {
  const out: number[] = [];
  for (const pol of iv.policies.values()) for (const r of pol.rules) for (const c of r.conditions) out.push(c.variable);
  return out;
}
