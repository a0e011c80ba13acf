/**
 * Counterfactual outcomes of the reference rows under each arm, for one graph of the set.
 *
 * Each reference row keeps its abducted noise; the treatment is set (or shifted, or set by a
 * policy) and only the nodes on a directed path from the treatment to the outcome are
 * recomputed, in topological order, through the compiled kernels (scm/kernel.ts). Every
 * other node keeps its observed value: a non-descendant of the treatment is unchanged by the
 * intervention, and a descendant that is not an ancestor of the outcome cannot reach it.
 * The same noise is used for every arm (common random numbers), so per-unit differences carry
 * no simulation noise from the rows' own draws. Rows whose treatment an arm leaves at its
 * observed value keep their observed outcome (consistency), so for a continuous outcome only
 * the changed rows are simulated (simulateChangedRows).
 *
 * Graphs of a bootstrap set share most mechanisms, so a node's counterfactual column is the
 * same in every graph where the node and its affected ancestors (back to the treatment) have
 * the same mechanisms: such columns are memoised per arm under a signature of that chain
 * (`memo`), and computed once for the whole graph set.
 *
 * Outcome value per row: a continuous outcome is f(parents) + e (its abducted noise); for a
 * binary or categorical outcome we store P(outcome | counterfactual parents) — the abducted
 * draw averaged over the outcome's own noise (Rao–Blackwellised), which has the same mean over
 * rows with less Monte Carlo noise.
 */
import type { CompiledModel } from '../scm/compiled-model.js';
import { KIND_CATEGORICAL, KIND_CONTINUOUS, MECH_HIDDEN, MECH_PARENT_COUNT, MECH_PARENT_OFFSET, MECH_STRIDE } from '../scm/compiled-model.js';
import { InterventionError } from '../scm/intervention.js';
import { applyNoise, kernelWidths, mechanismOutput } from '../scm/kernel.js';
import { fixedPreactivation, isAdditiveMlp, mlpOutputRows, PARENT_CONSTANT, PARENT_FIXED, PARENT_VARYING } from '../scm/mlp-row-kernel.js';
import { ancestorMask, descendantMask } from '../scm/model-access.js';
import { armTreatmentColumn, type ResolvedArm } from './arms.js';

/** Scratch buffers reused across graphs and arms of one query. */
export interface SimulationScratch {
  readonly work: Float64Array;
  readonly mean: Float64Array;
  readonly hidden: Float64Array;
  /** The rows an arm changes, gathered column by column (p × R at most), their indices and one noise column. */
  readonly sub: Float64Array;
  readonly rows: Int32Array;
  readonly noise: Float64Array;
  /**
   * MLP pre-activations from the parents that keep their observed values, per (mechanism,
   * parent roles): the same in every arm and graph (scm/mlp-row-kernel.ts). At most
   * MAX_FIXED_VALUES numbers are kept (the tables are dropped when a new one would pass it).
   */
  readonly fixed: Map<string, Float64Array>;
  /** Per parent of one mechanism: its role and, for a constant one, its value; and the constant part per hidden unit. */
  readonly role: Uint8Array;
  readonly constants: Float64Array;
  readonly constPart: Float64Array;
  readonly inputIndex: Int32Array;
  /** Per arm memo (one arm of one query): the rows the arm changes and whether it sets one treatment value on them all. */
  readonly changed: WeakMap<Map<string, Float64Array>, { readonly rows: Int32Array; tConstant: boolean }>;
}

/** Most values kept in a scratch's fixed pre-activation tables (each R × (h + 1)): 16 MB. */
const MAX_FIXED_VALUES = 1 << 21;

/** Allocate scratch for a model (once per query, or kept in the query cache). */
export function simulationScratch(model: CompiledModel): SimulationScratch {
  const R = model.nReference;
  const { hidden, outputs } = kernelWidths(model);
  return {
    work: model.referenceValues.slice(),
    mean: new Float64Array(Math.max(1, outputs) * R),
    hidden: new Float64Array(Math.max(1, hidden) * R),
    sub: new Float64Array(model.p * R),
    rows: new Int32Array(R),
    noise: new Float64Array(R),
    fixed: new Map(),
    role: new Uint8Array(model.p),
    constants: new Float64Array(model.p),
    constPart: new Float64Array(Math.max(1, hidden)),
    inputIndex: new Int32Array(Math.max(1, hidden)),
    changed: new WeakMap(),
  };
}

/** Nodes (topological order of graph g) on a directed path treatment ⇝ outcome, treatment excluded. */
export function affectedNodes(model: CompiledModel, g: number, t: number, y: number): Int32Array {
  const p = model.p;
  const de = descendantMask(model, g, [t]);
  if (de[y] !== 1) return new Int32Array(0);
  const an = ancestorMask(model, g, [y]);
  const out: number[] = [];
  for (let k = 0; k < p; k++) {
    const j = model.topoOrder[g * p + k];
    if (j !== t && de[j] === 1 && (an[j] === 1 || j === y)) out.push(j);
  }
  return Int32Array.from(out);
}

/**
 * Outcome of every reference row under each arm in graph g, into out[a*R + r].
 * `outcomeLevel` (a code) is required for a categorical outcome.
 */
export function simulateArms(
  model: CompiledModel,
  g: number,
  t: number,
  y: number,
  outcomeLevel: number,
  arms: readonly ResolvedArm[],
  scratch: SimulationScratch,
  out: Float64Array,
  memo: Map<string, Float64Array>[] | null = null,
  /** Simulate only the rows an arm changes (default); false recomputes every row (for tests). */
  changedRowsOnly = true,
): void {
  const R = model.nReference;
  const p = model.p;
  const ref = model.referenceValues;
  const work = scratch.work;
  const affected = affectedNodes(model, g, t, y);
  const de = descendantMask(model, g, [t]);
  const yKind = model.kinds[y];
  const yMech = model.mechanismOf[g * p + y];
  const yAffected = affected.includes(y);
  const tOff = t * R;
  // Signature of each affected node: its mechanism and, per parent, the parent's signature
  // (affected), 'T' (the treatment) or '' (observed value, the same in every graph).
  const sig = new Array<string>(p);
  const isAffected = new Uint8Array(p);
  for (let k = 0; k < affected.length; k++) isAffected[affected[k]] = 1;
  for (let k = 0; k < affected.length; k++) {
    const j = affected[k];
    const m = model.mechanismOf[g * p + j];
    const po = model.mechTable[m * MECH_STRIDE + MECH_PARENT_OFFSET];
    const pc = model.mechTable[m * MECH_STRIDE + MECH_PARENT_COUNT];
    let s = `${m}(`;
    for (let q = 0; q < pc; q++) {
      const v = model.mechParents[po + q];
      s += v === t ? 'T,' : isAffected[v] === 1 ? `${sig[v]},` : ',';
    }
    sig[j] = s + ')';
  }
  for (let a = 0; a < arms.length; a++) {
    const armMemo = memo ? memo[a] : null;
    const arm = arms[a];
    // Treatment column; a policy may read only pre-treatment variables (other arms read none).
    for (const v of arm.reads) {
      if (de[v] === 1 || v === t) {
        throw new InterventionError(`policy for "${model.names[t]}" reads "${model.names[v]}", a descendant of the treatment in graph ${g}; rules may only read pre-treatment variables`);
      }
    }
    armTreatmentColumn(arm, t, ref, work, R);
    if (changedRowsOnly && yKind === KIND_CONTINUOUS && simulateChangedRows(model, g, t, y, yAffected, affected, sig, scratch, out, a * R, armMemo)) {
      work.set(ref.subarray(tOff, tOff + R), tOff);
      continue;
    }
    // Nodes on a path to the outcome (the outcome itself is handled below).
    for (let k = 0; k < affected.length; k++) {
      const j = affected[k];
      if (j === y) continue;
      const hit = armMemo ? armMemo.get(sig[j]) : undefined;
      if (hit) {
        work.set(hit, j * R);
        continue;
      }
      const m = model.mechanismOf[g * p + j];
      mechanismOutput(model, m, work, R, scratch.hidden, scratch.mean);
      applyNoise(model, j, scratch.mean, model.referenceNoise, m * R, R, work, j * R);
      if (armMemo) armMemo.set(sig[j], work.slice(j * R, (j + 1) * R));
    }
    const o = a * R;
    const yKey = yAffected ? `y:${sig[y]}` : `y:${yMech}`;
    const yHit = armMemo ? armMemo.get(yKey) : undefined;
    if (yHit) {
      out.set(yHit, o);
    } else if (yKind === KIND_CONTINUOUS) {
      if (yAffected) {
        mechanismOutput(model, yMech, work, R, scratch.hidden, scratch.mean);
        const noise = model.referenceNoise;
        const nOff = yMech * R;
        for (let r = 0; r < R; r++) out[o + r] = scratch.mean[r] + noise[nOff + r];
      } else if (y === t) {
        for (let r = 0; r < R; r++) out[o + r] = work[tOff + r];
      } else {
        for (let r = 0; r < R; r++) out[o + r] = ref[y * R + r];
      }
    } else {
      mechanismOutput(model, yMech, work, R, scratch.hidden, scratch.mean);
      const off = yKind === KIND_CATEGORICAL ? outcomeLevel * R : 0;
      for (let r = 0; r < R; r++) out[o + r] = scratch.mean[off + r];
    }
    if (armMemo && !yHit) armMemo.set(yKey, out.slice(o, o + R));
    // Restore the columns this arm overwrote.
    for (let k = 0; k < affected.length; k++) {
      const j = affected[k];
      work.set(ref.subarray(j * R, (j + 1) * R), j * R);
    }
    work.set(ref.subarray(tOff, tOff + R), tOff);
  }
}

/**
 * The arm's outcomes when it leaves some rows' treatment as observed (a 'set' arm on the rows
 * already at that value, a policy on the rows it already matches): those rows keep every
 * observed value — consistency: with its abducted noise the model reproduces an unchanged row
 * exactly — so only the changed rows are gathered and simulated. Halves the work of a binary
 * treatment's arms. Continuous outcomes only (a discrete outcome's stored value is a
 * probability, which the observed row does not give); returns false when every row changes, so
 * the caller simulates them all in place.
 */
function simulateChangedRows(
  model: CompiledModel,
  g: number,
  t: number,
  y: number,
  yAffected: boolean,
  affected: Int32Array,
  sig: readonly string[],
  scratch: SimulationScratch,
  out: Float64Array,
  o: number,
  armMemo: Map<string, Float64Array> | null,
): boolean {
  const R = model.nReference;
  const p = model.p;
  const ref = model.referenceValues;
  const { work, sub, rows, noise, mean, hidden } = scratch;
  const tOff = t * R;
  // A memoised outcome column (from an earlier graph, simulated either way) needs no rows.
  const yMech = model.mechanismOf[g * p + y];
  const yKey = yAffected ? `y:${sig[y]}` : `y:${yMech}`;
  const yHit = armMemo ? armMemo.get(yKey) : undefined;
  if (yHit) {
    out.set(yHit, o);
    return true;
  }
  // The arm's changed rows are the same in every graph: listed once per arm (per memo).
  let listed = armMemo ? scratch.changed.get(armMemo) : undefined;
  if (listed === undefined) {
    let count = 0;
    for (let r = 0; r < R; r++) if (work[tOff + r] !== ref[tOff + r]) rows[count++] = r;
    listed = { rows: rows.slice(0, count), tConstant: true };
    for (let i = 1; i < count && listed.tConstant; i++) if (work[tOff + rows[i]] !== work[tOff + rows[0]]) listed.tConstant = false;
    if (armMemo) scratch.changed.set(armMemo, listed);
  } else {
    rows.set(listed.rows);
  }
  const n = listed.rows.length;
  if (n === R) return false;
  // Rows the arm leaves as they are: the observed outcome.
  out.set(ref.subarray(y * R, (y + 1) * R), o);
  if (n > 0 && yAffected) {
    // Columns are gathered on first use: a mechanism's inputs only, and none after a memo hit.
    const have = new Uint8Array(p);
    const isAffected = new Uint8Array(p);
    for (let k = 0; k < affected.length; k++) isAffected[affected[k]] = 1;
    const gatherInputs = (m: number): void => {
      const po = model.mechTable[m * MECH_STRIDE + MECH_PARENT_OFFSET];
      const pc = model.mechTable[m * MECH_STRIDE + MECH_PARENT_COUNT];
      for (let q = 0; q < pc; q++) {
        const v = model.mechParents[po + q];
        if (have[v] === 1) continue;
        have[v] = 1;
        const src = v * R;
        const dst = v * n;
        for (let i = 0; i < n; i++) sub[dst + i] = work[src + rows[i]];
      }
    };
    // The treatment's value when it is one value on every changed row (a 'set' arm): then its
    // part of an MLP's pre-activation is one number per hidden unit.
    const tFirst = work[tOff + rows[0]];
    const tConstant = listed.tConstant;
    const { role, constants } = scratch;
    /** f(parents) of mechanism m on the changed rows into `mean`. */
    const evaluate = (m: number): void => {
      if (!isAdditiveMlp(model, m)) {
        gatherInputs(m);
        mechanismOutput(model, m, sub, n, hidden, mean);
        return;
      }
      const po = model.mechTable[m * MECH_STRIDE + MECH_PARENT_OFFSET];
      const pc = model.mechTable[m * MECH_STRIDE + MECH_PARENT_COUNT];
      let key = `${m}:`;
      let anyFixed = false;
      for (let q = 0; q < pc; q++) {
        const v = model.mechParents[po + q];
        if (v === t && tConstant) {
          role[q] = PARENT_CONSTANT;
          constants[q] = tFirst;
        } else if (v === t || isAffected[v] === 1) {
          role[q] = PARENT_VARYING;
          if (have[v] === 0) {
            have[v] = 1;
            for (let i = 0; i < n; i++) sub[v * n + i] = work[v * R + rows[i]];
          }
        } else {
          role[q] = PARENT_FIXED;
          anyFixed = true;
        }
        key += role[q];
      }
      let fixed = scratch.fixed.get(key) ?? null;
      if (fixed === null && anyFixed) {
        let kept = 0;
        for (const f of scratch.fixed.values()) kept += f.length;
        if (kept > 0 && kept + (model.mechTable[m * MECH_STRIDE + MECH_HIDDEN] + 1) * R > MAX_FIXED_VALUES) scratch.fixed.clear();
        fixed = fixedPreactivation(model, m, role);
        scratch.fixed.set(key, fixed);
      }
      mlpOutputRows(model, m, role, constants, fixed, rows, n, sub, scratch.constPart, scratch.inputIndex, hidden, mean);
    };
    const gatherNoise = (m: number): void => {
      const off = m * R;
      for (let i = 0; i < n; i++) noise[i] = model.referenceNoise[off + rows[i]];
    };
    // The memo is per arm and the changed rows are the arm's own, so its columns here are n long.
    for (let k = 0; k < affected.length; k++) {
      const j = affected[k];
      if (j === y) continue;
      have[j] = 1;
      const hit = armMemo ? armMemo.get(sig[j]) : undefined;
      if (hit) {
        sub.set(hit, j * n);
        continue;
      }
      const m = model.mechanismOf[g * p + j];
      evaluate(m);
      if (model.kinds[j] === KIND_CONTINUOUS) {
        const off = m * R;
        const d = j * n;
        for (let i = 0; i < n; i++) sub[d + i] = mean[i] + model.referenceNoise[off + rows[i]];
      } else {
        gatherNoise(m);
        applyNoise(model, j, mean, noise, 0, n, sub, j * n);
      }
      if (armMemo) armMemo.set(sig[j], sub.slice(j * n, (j + 1) * n));
    }
    evaluate(yMech);
    const yOff = yMech * R;
    for (let i = 0; i < n; i++) out[o + rows[i]] = mean[i] + model.referenceNoise[yOff + rows[i]];
  }
  if (armMemo) armMemo.set(yKey, out.slice(o, o + R));
  return true;
}
