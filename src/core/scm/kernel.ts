/**
 * Column-wise mechanism kernels over a compiled model: for one mechanism and a batch of n
 * units whose variable values sit node-major in `values` (variable j at values[j*n ..]),
 * compute f(parents) for all units at once. No allocation: callers pass the buffers.
 *
 * The noise coupling (shared by simulation and abduction, see abduction.ts):
 *  - continuous: x = f(pa) + e;
 *  - binary:     x = 1 if u < P(x = 1 | pa), else 0;
 *  - categorical: x = the first level c with u < P(0) + … + P(c) (inverse CDF).
 */
import {
  type CompiledModel,
  ENCODING_JOINT_CELLS,
  FAMILY_LINEAR,
  FAMILY_LOGISTIC,
  FAMILY_MLP,
  FAMILY_SOFTMAX,
  KIND_BINARY,
  KIND_CATEGORICAL,
  KIND_CONTINUOUS,
  MECH_ENCODING,
  MECH_FAMILY,
  MECH_HIDDEN,
  MECH_N_IN,
  MECH_N_OUT,
  MECH_PARAM_OFFSET,
  MECH_PARENT_COUNT,
  MECH_PARENT_OFFSET,
  MECH_STRIDE,
  SCALAR_STRIDE,
  SCALAR_Y_CENTRE,
  SCALAR_Y_SCALE,
} from './compiled-model.js';
import { tanhApprox } from '../mechanisms/activation.js';

/**
 * out[i] += Σ over the mechanism's encoded inputs of w·z_i, with weights read from
 * model.mechParams starting at `wOffset` (in the encoded-input order of mechanisms/encode.ts).
 */
function accumulate(model: CompiledModel, m: number, values: Float64Array, n: number, wOffset: number, out: Float64Array, outOff: number): void {
  const t = model.mechTable;
  const P = model.mechParams;
  const pa = t[m * MECH_STRIDE + MECH_PARENT_OFFSET];
  const pc = t[m * MECH_STRIDE + MECH_PARENT_COUNT];
  if (t[m * MECH_STRIDE + MECH_ENCODING] === ENCODING_JOINT_CELLS) {
    // Saturated encoding: weight of the unit's joint parent cell (cell 0 is the reference).
    const base = wOffset - 1;
    for (let i = 0; i < n; i++) {
      let cell = 0;
      let radix = 1;
      for (let a = 0; a < pc; a++) {
        const j = model.mechParents[pa + a];
        cell += radix * values[j * n + i];
        radix *= model.nLevels[j];
      }
      if (cell > 0) out[outOff + i] += P[base + cell];
    }
    return;
  }
  let wi = wOffset;
  for (let a = 0; a < pc; a++) {
    const j = model.mechParents[pa + a];
    const col = j * n;
    if (model.kinds[j] === KIND_CATEGORICAL) {
      const base = wi - 1;
      for (let i = 0; i < n; i++) {
        const c = values[col + i];
        if (c > 0) out[outOff + i] += P[base + c];
      }
      wi += model.nLevels[j] - 1;
    } else {
      const w = P[wi];
      const cen = model.centre[j];
      const sc = model.scale[j];
      for (let i = 0; i < n; i++) out[outOff + i] += w * ((values[col + i] - cen) / sc);
      wi += 1;
    }
  }
}

/** The mechanism's encoded inputs (mechanisms/encode.ts) as nIn columns of n values at dest[destOff ..]. */
function encodeColumns(model: CompiledModel, m: number, values: Float64Array, n: number, dest: Float64Array, destOff: number): void {
  const t = model.mechTable;
  const pa = t[m * MECH_STRIDE + MECH_PARENT_OFFSET];
  const pc = t[m * MECH_STRIDE + MECH_PARENT_COUNT];
  const nIn = t[m * MECH_STRIDE + MECH_N_IN];
  if (t[m * MECH_STRIDE + MECH_ENCODING] === ENCODING_JOINT_CELLS) {
    dest.fill(0, destOff, destOff + nIn * n);
    for (let i = 0; i < n; i++) {
      let cell = 0;
      let radix = 1;
      for (let a = 0; a < pc; a++) {
        const j = model.mechParents[pa + a];
        cell += radix * values[j * n + i];
        radix *= model.nLevels[j];
      }
      if (cell > 0) dest[destOff + (cell - 1) * n + i] = 1;
    }
    return;
  }
  let col = destOff;
  for (let a = 0; a < pc; a++) {
    const j = model.mechParents[pa + a];
    const src = j * n;
    if (model.kinds[j] === KIND_CATEGORICAL) {
      const k = model.nLevels[j];
      dest.fill(0, col, col + (k - 1) * n);
      for (let i = 0; i < n; i++) {
        const c = values[src + i];
        if (c > 0) dest[col + (c - 1) * n + i] = 1;
      }
      col += (k - 1) * n;
    } else {
      const cen = model.centre[j];
      const sc = model.scale[j];
      for (let i = 0; i < n; i++) dest[col + i] = (values[src + i] - cen) / sc;
      col += n;
    }
  }
}

/** sigmoid(t) without overflow (same formula as mechanisms/predict.ts). */
function sigmoid(t: number): number {
  if (t >= 0) return 1 / (1 + Math.exp(-t));
  const e = Math.exp(t);
  return e / (1 + e);
}

/**
 * f(parents) of mechanism m for n units into `out`: continuous → conditional mean (n values);
 * binary → P(x = 1) (n values); categorical → class probabilities, class-major (out[c*n + i]).
 * `scratch` must hold kernelWidths(model).hidden · n values.
 */
export function mechanismOutput(model: CompiledModel, m: number, values: Float64Array, n: number, scratch: Float64Array, out: Float64Array): void {
  const t = model.mechTable;
  const row = m * MECH_STRIDE;
  const fam = t[row + MECH_FAMILY];
  const nIn = t[row + MECH_N_IN];
  const po = t[row + MECH_PARAM_OFFSET];
  const P = model.mechParams;
  const yC = model.mechScalars[m * SCALAR_STRIDE + SCALAR_Y_CENTRE];
  const yS = model.mechScalars[m * SCALAR_STRIDE + SCALAR_Y_SCALE];
  if (fam === FAMILY_LINEAR || fam === FAMILY_LOGISTIC) {
    out.fill(P[po], 0, n);
    accumulate(model, m, values, n, po + 1, out, 0);
    if (fam === FAMILY_LINEAR) for (let i = 0; i < n; i++) out[i] = yC + yS * out[i];
    else for (let i = 0; i < n; i++) out[i] = sigmoid(out[i]);
    return;
  }
  if (fam === FAMILY_SOFTMAX) {
    const k = t[row + MECH_N_OUT];
    for (let c = 0; c < k; c++) {
      const wc = po + c * (1 + nIn);
      out.fill(P[wc], c * n, c * n + n);
      accumulate(model, m, values, n, wc + 1, out, c * n);
    }
    for (let i = 0; i < n; i++) {
      let mx = -Infinity;
      for (let c = 0; c < k; c++) if (out[c * n + i] > mx) mx = out[c * n + i];
      let z = 0;
      for (let c = 0; c < k; c++) {
        const e = Math.exp(out[c * n + i] - mx);
        out[c * n + i] = e;
        z += e;
      }
      for (let c = 0; c < k; c++) out[c * n + i] /= z;
    }
    return;
  }
  // MLP families: W1 (h × nIn), b1 (h), w2 (h), b2, then the linear part L0, L1..L_nIn.
  // The encoded inputs are written once into scratch rows h..h+nIn−1 and the linear part into
  // row h+nIn; each hidden unit is a weighted sum of the input columns.
  const h = t[row + MECH_HIDDEN];
  const b1 = po + h * nIn;
  const w2 = b1 + h;
  const b2 = w2 + h;
  const lin = b2 + 1;
  const zOff = h * n;
  const lOff = (h + nIn) * n;
  encodeColumns(model, m, values, n, scratch, zOff);
  scratch.fill(P[lin], lOff, lOff + n);
  for (let k = 0; k < nIn; k++) {
    const w = P[lin + 1 + k];
    const zk = zOff + k * n;
    for (let i = 0; i < n; i++) scratch[lOff + i] += w * scratch[zk + i];
  }
  for (let u = 0; u < h; u++) {
    const off = u * n;
    scratch.fill(P[b1 + u], off, off + n);
    for (let k = 0; k < nIn; k++) {
      const w = P[po + u * nIn + k];
      const zk = zOff + k * n;
      for (let i = 0; i < n; i++) scratch[off + i] += w * scratch[zk + i];
    }
  }
  out.fill(P[b2], 0, n);
  for (let u = 0; u < h; u++) {
    const wu = P[w2 + u];
    const off = u * n;
    for (let i = 0; i < n; i++) out[i] += wu * tanhApprox(scratch[off + i]);
  }
  if (fam === FAMILY_MLP) for (let i = 0; i < n; i++) out[i] = scratch[lOff + i] + (yC + yS * out[i]);
  else for (let i = 0; i < n; i++) out[i] = sigmoid(scratch[lOff + i] + out[i]);
}

/**
 * Values of node j from its mechanism output (`mean`, as written by mechanismOutput) and noise
 * (`noise[noiseOff + i]`: additive e for continuous nodes, uniform u otherwise), into
 * dest[destOff + i].
 */
export function applyNoise(
  model: CompiledModel,
  j: number,
  mean: Float64Array,
  noise: Float64Array,
  noiseOff: number,
  n: number,
  dest: Float64Array,
  destOff: number,
): void {
  const kind = model.kinds[j];
  if (kind === KIND_CONTINUOUS) {
    for (let i = 0; i < n; i++) dest[destOff + i] = mean[i] + noise[noiseOff + i];
  } else if (kind === KIND_BINARY) {
    for (let i = 0; i < n; i++) dest[destOff + i] = noise[noiseOff + i] < mean[i] ? 1 : 0;
  } else {
    const k = model.nLevels[j];
    for (let i = 0; i < n; i++) {
      const u = noise[noiseOff + i];
      let acc = 0;
      let c = 0;
      for (; c < k - 1; c++) {
        acc += mean[c * n + i];
        if (u < acc) break;
      }
      dest[destOff + i] = c;
    }
  }
}

/**
 * Per-unit sizes of the kernel buffers: `hidden` rows of scratch (MLP hidden units, their
 * encoded inputs and the linear part) and `outputs` rows of output; allocate hidden·n and outputs·n values.
 */
export function kernelWidths(model: CompiledModel): { hidden: number; outputs: number } {
  let hidden = 1;
  let outputs = 1;
  for (let m = 0; m < model.nMechanisms; m++) {
    const row = m * MECH_STRIDE;
    const h = model.mechTable[row + MECH_HIDDEN];
    if (h > 0 && h + model.mechTable[row + MECH_N_IN] + 1 > hidden) hidden = h + model.mechTable[row + MECH_N_IN] + 1;
    if (model.mechTable[row + MECH_N_OUT] > outputs) outputs = model.mechTable[row + MECH_N_OUT];
  }
  return { hidden, outputs };
}
