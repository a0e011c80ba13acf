/**
 * Segments: predicates on pre-treatment variables (level sets, numeric ranges) that select
 * reference rows. A segment may only read non-descendants of the treatment: conditioning on a
 * descendant mixes the effect with the selection it causes (Pearl 2009, §3.3 and §11.3.1), so
 * such a segment is refused, naming every graph of the set where the variable is a descendant
 * and their total weight.
 */
import type { CompiledModel } from '../scm/compiled-model.js';
import { KIND_CONTINUOUS } from '../scm/compiled-model.js';
import type { PolicyCondition, ResolvedCondition } from '../scm/intervention.js';
import { valueCode, variableIndexOf } from '../scm/intervention.js';
import { descendantMask } from '../scm/model-access.js';
import { QueryRefusalError } from '../scm/query-refusal.js';
import { argsort } from '../stats/argsort.js';

/** A segment: every condition must hold (an empty list selects every row). */
export interface Segment {
  readonly name?: string;
  readonly conditions: readonly PolicyCondition[];
}

/** A segment that reads a descendant of the treatment in at least one graph. */
export class SegmentError extends QueryRefusalError {
  constructor(
    message: string,
    /** The offending variable. */
    readonly variable: string,
    /** Graph indices where it is a descendant of the treatment. */
    readonly graphs: readonly number[],
    /** Their total weight. */
    readonly weight: number,
  ) {
    super(message);
    this.name = 'SegmentError';
  }
}

/** A segment resolved to reference rows. */
export interface ResolvedSegment {
  readonly name: string;
  /** 1 for reference rows in the segment. */
  readonly mask: Uint8Array;
  /** Rows in the segment. */
  readonly count: number;
  /** Sum of their reference weights. */
  readonly weight: number;
}

/**
 * Throw SegmentError unless every variable in `variables` is a non-descendant of the treatment
 * (and not the treatment itself) in every graph of the set.
 */
export function checkPreTreatment(model: CompiledModel, treatment: number, variables: readonly number[], what = 'segment'): void {
  const tName = model.names[treatment];
  for (const v of variables) {
    if (v === treatment) {
      throw new SegmentError(`${what} reads the treatment "${tName}" itself; segments must be defined on pre-treatment variables`, tName, [], 1);
    }
  }
  for (const v of variables) {
    const graphs: number[] = [];
    let w = 0;
    for (let g = 0; g < model.nGraphs; g++) {
      if (descendantMask(model, g, [treatment])[v] === 1) {
        graphs.push(g);
        w += model.graphWeights[g];
      }
    }
    if (graphs.length > 0) {
      const vName = model.names[v];
      throw new SegmentError(
        `${what} variable "${vName}" is a descendant of the treatment "${tName}" in graph(s) ${graphs.join(', ')} ` +
          `(total weight ${w.toFixed(3)} of the graph set): the treatment can change who is in the segment, so the ` +
          `comparison would mix the effect with that change. Define the segment on variables the treatment cannot affect.`,
        vName,
        graphs,
        w,
      );
    }
  }
}

/** Resolve the conditions of a segment against the model (names, levels) without row masks. */
export function resolveConditions(model: CompiledModel, conditions: readonly PolicyCondition[]): ResolvedCondition[] {
  return conditions.map((c) => {
    const v = variableIndexOf(model, c.variable);
    if ('in' in c) {
      if (model.kinds[v] === KIND_CONTINUOUS) throw new QueryRefusalError(`segment condition on continuous "${c.variable}" needs a range, not a level set`);
      const codes = new Uint8Array(model.nLevels[v]);
      for (const lv of c.in) codes[valueCode(model, v, lv)] = 1;
      return { variable: v, codes, lo: NaN, hi: NaN };
    }
    const [lo, hi] = c.range;
    return { variable: v, codes: null, lo: lo ?? -Infinity, hi: hi ?? Infinity };
  });
}

/** Mask of reference rows where every condition holds. */
export function segmentMask(model: CompiledModel, conds: readonly ResolvedCondition[]): Uint8Array {
  const R = model.nReference;
  const mask = new Uint8Array(R).fill(1);
  const vals = model.referenceValues;
  for (const c of conds) {
    const off = c.variable * R;
    if (c.codes !== null) {
      const codes = c.codes;
      for (let r = 0; r < R; r++) if (codes[vals[off + r]] !== 1) mask[r] = 0;
    } else {
      for (let r = 0; r < R; r++) {
        const x = vals[off + r];
        if (!(x >= c.lo && x < c.hi)) mask[r] = 0;
      }
    }
  }
  return mask;
}

/** Name a segment from its conditions when the caller gave none. */
export function segmentName(model: CompiledModel, conds: readonly ResolvedCondition[]): string {
  if (conds.length === 0) return 'all';
  return conds
    .map((c) => {
      const nm = model.names[c.variable];
      if (c.codes !== null) {
        const lv = model.levels[c.variable];
        const names: string[] = [];
        for (let k = 0; k < c.codes.length; k++) if (c.codes[k] === 1) names.push(lv ? lv[k] : String(k));
        return `${nm} in {${names.join(', ')}}`;
      }
      const lo = Number.isFinite(c.lo) ? `${fmt(c.lo)} ≤ ` : '';
      const hi = Number.isFinite(c.hi) ? ` < ${fmt(c.hi)}` : '';
      return `${lo}${nm}${hi}`;
    })
    .join(' and ');
}

function fmt(x: number): string {
  return Math.abs(x) >= 1000 || Number.isInteger(x) ? String(Math.round(x * 100) / 100) : x.toPrecision(4);
}

/**
 * Resolve a segment (checking it is pre-treatment) to its reference-row mask. `checked`: the
 * caller has already checked its variables (segments made by expandSegments from cells or bins).
 */
export function resolveSegment(model: CompiledModel, treatment: number, segment: Segment, checked = false): ResolvedSegment {
  const conds = resolveConditions(model, segment.conditions);
  if (!checked) checkPreTreatment(model, treatment, conds.map((c) => c.variable));
  const mask = segmentMask(model, conds);
  let count = 0;
  let weight = 0;
  for (let r = 0; r < mask.length; r++) if (mask[r] === 1) (count++, (weight += model.referenceWeights[r]));
  return { name: segment.name ?? segmentName(model, conds), mask, count, weight };
}

/** How an uplift table splits the reference rows. */
export type SegmentBy =
  /** Every cell of the listed discrete variables (their cross product; empty cells dropped). */
  | { readonly cells: readonly string[] }
  /** Quantile bins of a numeric variable (weighted by reference weights), `bins` of them. */
  | { readonly variable: string; readonly bins: number }
  /** Explicit segments. */
  | { readonly segments: readonly Segment[] };

/** Expand a SegmentBy into explicit segments (checked against the treatment's descendants). */
export function expandSegments(model: CompiledModel, treatment: number, by: SegmentBy): Segment[] {
  if ('segments' in by) return by.segments.slice();
  if ('cells' in by) {
    const vars = by.cells.map((nm) => variableIndexOf(model, nm));
    checkPreTreatment(model, treatment, vars);
    for (const v of vars) {
      if (model.kinds[v] === KIND_CONTINUOUS) throw new QueryRefusalError(`segment-by variable "${model.names[v]}" is continuous: use quantile bins`);
    }
    let combos: number[][] = [[]];
    for (const v of vars) {
      const next: number[][] = [];
      for (const c of combos) for (let k = 0; k < model.nLevels[v]; k++) next.push([...c, k]);
      combos = next;
    }
    return combos.map((codes) => ({
      conditions: codes.map((k, i) => ({ variable: model.names[vars[i]], in: [k] })),
    }));
  }
  const v = variableIndexOf(model, by.variable);
  checkPreTreatment(model, treatment, [v]);
  if (model.kinds[v] !== KIND_CONTINUOUS) throw new QueryRefusalError(`quantile bins need a numeric variable; "${by.variable}" is discrete: use cells`);
  if (!(Number.isInteger(by.bins) && by.bins >= 2)) throw new QueryRefusalError(`bins must be an integer ≥ 2, got ${by.bins}`);
  const R = model.nReference;
  const vals = model.referenceValues.subarray(v * R, (v + 1) * R);
  const idx = argsort(vals);
  let total = 0;
  for (let r = 0; r < R; r++) total += model.referenceWeights[r];
  const cuts: number[] = [];
  let acc = 0;
  let q = 1;
  for (const r of idx) {
    acc += model.referenceWeights[r];
    while (q < by.bins && acc >= (q * total) / by.bins) {
      cuts.push(vals[r]);
      q++;
    }
  }
  const edges = [-Infinity, ...new Set(cuts), Infinity];
  const out: Segment[] = [];
  for (let b = 0; b + 1 < edges.length; b++) {
    const lo = edges[b];
    const hi = edges[b + 1];
    out.push({
      conditions: [{ variable: by.variable, range: [Number.isFinite(lo) ? lo : null, Number.isFinite(hi) ? hi : null] }],
    });
  }
  return out;
}
