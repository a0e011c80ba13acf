/**
 * MLP mechanism outputs on a subset of the reference rows when most inputs are the same in
 * every arm and graph — the counterfactual simulation's common case (effects/counterfactual.ts).
 *
 * A hidden unit's pre-activation b1_u + Σ_k W1_uk·z_k is a sum over the encoded inputs, so it
 * splits by where each parent's value comes from:
 *  - FIXED: the parent's observed reference value (a non-descendant of the treatment, or a
 *    descendant off every path to the outcome): its part is the same for every arm and graph,
 *    computed once per (mechanism, fixed parents) on all R rows (fixedPreactivation);
 *  - CONSTANT: one value on every simulated row (the treatment under a 'set' arm): its part is
 *    one number per hidden unit;
 *  - VARYING: a counterfactual column, the only part computed per row and evaluation.
 * The result is mechanismOutput (scm/kernel.ts) with the pre-activation's terms summed in
 * another order: equal up to floating-point reassociation (tests/core/scm/mlp-row-kernel.test.ts
 * checks it against mechanismOutput).
 */
import {
  type CompiledModel,
  ENCODING_ADDITIVE,
  FAMILY_MLP,
  FAMILY_MLP_BERNOULLI,
  KIND_CATEGORICAL,
  MECH_ENCODING,
  MECH_FAMILY,
  MECH_HIDDEN,
  MECH_N_IN,
  MECH_PARAM_OFFSET,
  MECH_PARENT_COUNT,
  MECH_PARENT_OFFSET,
  MECH_STRIDE,
  SCALAR_STRIDE,
  SCALAR_Y_CENTRE,
  SCALAR_Y_SCALE,
} from './compiled-model.js';
import { tanhApprox } from '../mechanisms/activation.js';

/** Where a parent's value comes from (see the header). */
export const PARENT_FIXED = 0;
export const PARENT_CONSTANT = 1;
export const PARENT_VARYING = 2;

/** True for an MLP mechanism (either family) with the additive input encoding: the ones this kernel evaluates. */
export function isAdditiveMlp(model: CompiledModel, m: number): boolean {
  const row = m * MECH_STRIDE;
  const fam = model.mechTable[row + MECH_FAMILY];
  return (fam === FAMILY_MLP || fam === FAMILY_MLP_BERNOULLI) && model.mechTable[row + MECH_ENCODING] === ENCODING_ADDITIVE;
}

/** Where MLP mechanism m's numbers sit: hidden units, encoded inputs, parameter and parent offsets, parent count. */
function mlpLayout(model: CompiledModel, m: number): { h: number; nIn: number; po: number; pa: number; pc: number } {
  const t = model.mechTable;
  const row = m * MECH_STRIDE;
  return { h: t[row + MECH_HIDDEN], nIn: t[row + MECH_N_IN], po: t[row + MECH_PARAM_OFFSET], pa: t[row + MECH_PARENT_OFFSET], pc: t[row + MECH_PARENT_COUNT] };
}

/**
 * (h + 1) × R, unit-major: at [u·R + r], b1_u + Σ over the FIXED parents' inputs of W1_uk·z_k(r)
 * for hidden unit u and reference row r; at [h·R + r], L0 + Σ L_k·z_k(r) (the linear skip
 * part). `role[q]` is the role of the mechanism's q-th parent.
 */
export function fixedPreactivation(model: CompiledModel, m: number, role: Uint8Array): Float64Array {
  const { h, nIn, po, pa, pc } = mlpLayout(model, m);
  const P = model.mechParams;
  const lin = po + h * nIn + 2 * h + 1;
  const R = model.nReference;
  const ref = model.referenceValues;
  const out = new Float64Array((h + 1) * R);
  for (let u = 0; u < h; u++) out.fill(P[po + h * nIn + u], u * R, (u + 1) * R);
  out.fill(P[lin], h * R, (h + 1) * R);
  let z: Float64Array | null = null;
  let wi = 0;
  for (let q = 0; q < pc; q++) {
    const v = model.mechParents[pa + q];
    const col = v * R;
    const cat = model.kinds[v] === KIND_CATEGORICAL;
    if (role[q] === PARENT_FIXED) {
      if (cat) {
        for (let u = 0; u <= h; u++) {
          // Weight of level c ≥ 1 at wr + c (indicator inputs wi .. wi + k − 2).
          const wr = (u < h ? po + u * nIn : lin + 1) + wi - 1;
          const o = u * R;
          for (let r = 0; r < R; r++) {
            const c = ref[col + r];
            if (c > 0) out[o + r] += P[wr + c];
          }
        }
      } else {
        const cen = model.centre[v];
        const sc = model.scale[v];
        z ??= new Float64Array(R);
        for (let r = 0; r < R; r++) z[r] = (ref[col + r] - cen) / sc;
        for (let u = 0; u <= h; u++) {
          const w = u < h ? P[po + u * nIn + wi] : P[lin + 1 + wi];
          const o = u * R;
          for (let r = 0; r < R; r++) out[o + r] += w * z[r];
        }
      }
    }
    wi += cat ? model.nLevels[v] - 1 : 1;
  }
  return out;
}

/**
 * f(parents) of MLP mechanism m (isAdditiveMlp) for n rows into out[0..n): the conditional mean
 * (mlp) or P(x = 1) (mlp-bernoulli), as mechanismOutput gives them. Row i is reference row
 * rows[i]: its FIXED part is fixed[u·R + rows[i]] (fixedPreactivation with the same roles;
 * null when no parent is FIXED);
 * a CONSTANT parent's value is `constants[q]`; a VARYING parent v's values are values[v·n + i].
 * Scratch: `cst` at least h + 1 values, `inputOf` nIn, `pre` at least (nIn + 1)·n.
 */
export function mlpOutputRows(
  model: CompiledModel,
  m: number,
  role: Uint8Array,
  constants: Float64Array,
  fixed: Float64Array | null,
  rows: Int32Array,
  n: number,
  values: Float64Array,
  cst: Float64Array,
  inputOf: Int32Array,
  pre: Float64Array,
  out: Float64Array,
): void {
  const { h, nIn, po, pa, pc } = mlpLayout(model, m);
  const t = model.mechTable;
  const row = m * MECH_STRIDE;
  const P = model.mechParams;
  const R = model.nReference;
  const w2 = po + h * nIn + h;
  const b2 = w2 + h;
  const lin = b2 + 1;
  const bern = t[row + MECH_FAMILY] === FAMILY_MLP_BERNOULLI;
  const yC = model.mechScalars[m * SCALAR_STRIDE + SCALAR_Y_CENTRE];
  const yS = model.mechScalars[m * SCALAR_STRIDE + SCALAR_Y_SCALE];
  // The CONSTANT parents' part per hidden unit (cst[u]) and of the skip part (cst[h]) — with the
  // biases when no parent is FIXED (there is no fixed part then) —; the VARYING parents'
  // encoded inputs as columns z_0.. (pre[c·n + i]) with their input index.
  if (fixed === null) {
    for (let u = 0; u < h; u++) cst[u] = P[po + h * nIn + u];
    cst[h] = P[lin];
  } else {
    cst.fill(0, 0, h + 1);
  }
  let wi = 0;
  let nV = 0;
  for (let q = 0; q < pc; q++) {
    const v = model.mechParents[pa + q];
    const cat = model.kinds[v] === KIND_CATEGORICAL;
    const width = cat ? model.nLevels[v] - 1 : 1;
    if (role[q] === PARENT_CONSTANT) {
      if (cat) {
        const c = constants[q];
        if (c > 0) {
          for (let u = 0; u < h; u++) cst[u] += P[po + u * nIn + wi + c - 1];
          cst[h] += P[lin + 1 + wi + c - 1];
        }
      } else {
        const z = (constants[q] - model.centre[v]) / model.scale[v];
        for (let u = 0; u < h; u++) cst[u] += P[po + u * nIn + wi] * z;
        cst[h] += P[lin + 1 + wi] * z;
      }
    } else if (role[q] === PARENT_VARYING) {
      const col = v * n;
      if (cat) {
        for (let c = 0; c < width; c++) {
          const o = (nV + c) * n;
          for (let i = 0; i < n; i++) pre[o + i] = values[col + i] === c + 1 ? 1 : 0;
          inputOf[nV + c] = wi + c;
        }
      } else {
        const cen = model.centre[v];
        const sc = model.scale[v];
        const o = nV * n;
        for (let i = 0; i < n; i++) pre[o + i] = (values[col + i] - cen) / sc;
        inputOf[nV] = wi;
      }
      nV += width;
    }
    wi += width;
  }
  if (fixed === null && nV === 0) {
    // Constant parents only: one value for every row.
    let acc = P[b2];
    for (let u = 0; u < h; u++) acc += P[w2 + u] * tanhApprox(cst[u]);
    const l = cst[h];
    out.fill(bern ? sigmoid(l + acc) : l + (yC + yS * acc), 0, n);
    return;
  }
  // Per hidden unit, one pass over the rows: fixed + constant + varying parts, activation and
  // output weight (no pre-activation array). Specialised on the usual 0–2 varying inputs.
  out.fill(P[b2], 0, n);
  for (let u = 0; u < h; u++) {
    const f = u * R;
    const c = cst[u];
    const wu = P[w2 + u];
    const wr = po + u * nIn;
    if (fixed === null) {
      // Biases and constant parts in c; varying inputs only.
      if (nV === 1) {
        const w0 = P[wr + inputOf[0]];
        for (let i = 0; i < n; i++) out[i] += wu * tanhApprox(c + w0 * pre[i]);
      } else if (nV === 2) {
        const w0 = P[wr + inputOf[0]];
        const w1 = P[wr + inputOf[1]];
        for (let i = 0; i < n; i++) out[i] += wu * tanhApprox(c + w0 * pre[i] + w1 * pre[n + i]);
      } else {
        const a = pre.subarray(nV * n, (nV + 1) * n);
        sumInputs(a, null, 0, c, rows, n, pre, nV, P, wr, inputOf);
        for (let i = 0; i < n; i++) out[i] += wu * tanhApprox(a[i]);
      }
    } else if (nV === 0) {
      for (let i = 0; i < n; i++) out[i] += wu * tanhApprox(fixed[f + rows[i]] + c);
    } else if (nV === 1) {
      const w0 = P[wr + inputOf[0]];
      for (let i = 0; i < n; i++) out[i] += wu * tanhApprox(fixed[f + rows[i]] + c + w0 * pre[i]);
    } else if (nV === 2) {
      const w0 = P[wr + inputOf[0]];
      const w1 = P[wr + inputOf[1]];
      for (let i = 0; i < n; i++) out[i] += wu * tanhApprox(fixed[f + rows[i]] + c + w0 * pre[i] + w1 * pre[n + i]);
    } else {
      const a = pre.subarray(nV * n, (nV + 1) * n);
      sumInputs(a, fixed, f, c, rows, n, pre, nV, P, wr, inputOf);
      for (let i = 0; i < n; i++) out[i] += wu * tanhApprox(a[i]);
    }
  }
  // The linear skip part.
  const a = pre.subarray(nV * n, (nV + 1) * n);
  sumInputs(a, fixed, h * R, cst[h], rows, n, pre, nV, P, lin + 1, inputOf);
  if (bern) for (let i = 0; i < n; i++) out[i] = sigmoid(a[i] + out[i]);
  else for (let i = 0; i < n; i++) out[i] = a[i] + (yC + yS * out[i]);
}

/** a[i] = fixed[f + rows[i]] + c + Σ_k P[wr + inputOf[k]]·z_k[i] (z_k = pre[k·n ..]), in that order; without the first term when `fixed` is null. */
function sumInputs(
  a: Float64Array,
  fixed: Float64Array | null,
  f: number,
  c: number,
  rows: Int32Array,
  n: number,
  pre: Float64Array,
  nV: number,
  P: Float64Array,
  wr: number,
  inputOf: Int32Array,
): void {
  if (fixed === null) a.fill(c, 0, n);
  else for (let i = 0; i < n; i++) a[i] = fixed[f + rows[i]] + c;
  for (let k = 0; k < nV; k++) {
    const w = P[wr + inputOf[k]];
    const o = k * n;
    for (let i = 0; i < n; i++) a[i] += w * pre[o + i];
  }
}

/** sigmoid(t) without overflow (same formula as scm/kernel.ts). */
function sigmoid(t: number): number {
  if (t >= 0) return 1 / (1 + Math.exp(-t));
  const e = Math.exp(t);
  return e / (1 + e);
}
