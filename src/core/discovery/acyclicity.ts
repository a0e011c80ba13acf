import { expm } from '../linalg/expm.js';

/**
 * Smooth acyclicity functions on a nonnegative d×d matrix A (A = W∘W for the linear learner,
 * A_ij = Σ_k W1_j[k,i]² for the MLP learner). Both are 0 exactly when A is the weighted
 * adjacency of a DAG and positive when A has a directed cycle.
 *
 * - 'expm':   h(A) = tr(e^A) − d, ∇_A h = (e^A)ᵀ
 *             (Zheng, Aragam, Ravikumar & Xing 2018, "DAGs with NO TEARS", NeurIPS).
 * - 'logdet': h(A) = −log det(sI − A) + d log s, ∇_A h = (sI − A)^{-T}, defined on the
 *             M-matrix domain ρ(A) < s (Bello, Aragam & Ravikumar 2022, "DAGMA", NeurIPS).
 *             Outside the domain the value is +Infinity, so a line search backs off.
 */
export type AcyclicityForm = 'expm' | 'logdet';

/** Evaluates h(A) and writes ∇_A h into `gradA` (both d×d row-major). */
export type AcyclicityFn = (a: Float64Array, gradA: Float64Array) => number;

/** An evaluator for one dimension and form, with its scratch buffers allocated once. */
export function createAcyclicity(d: number, form: AcyclicityForm = 'expm', s = 1): AcyclicityFn {
  if (form === 'expm') return (a, gradA) => hExpm(d, a, gradA);
  if (!(s > 0)) throw new RangeError(`createAcyclicity: s must be positive, got ${s}`);
  const lu = new Float64Array(d * d);
  const inv = new Float64Array(d * d);
  return (a, gradA) => hLogdet(d, s, a, gradA, lu, inv);
}

function hExpm(d: number, a: Float64Array, gradA: Float64Array): number {
  const e = expm({ rows: d, cols: d, data: a }).data;
  let tr = 0;
  for (let i = 0; i < d; i++) {
    tr += e[i * d + i];
    for (let j = 0; j < d; j++) gradA[i * d + j] = e[j * d + i];
  }
  return tr - d;
}

/**
 * M = sI − A is a Z-matrix; it is a nonsingular M-matrix (ρ(A) < s) exactly when Gaussian
 * elimination without pivoting meets only positive pivots (all leading principal minors
 * positive; Berman & Plemmons 1994, "Nonnegative Matrices in the Mathematical Sciences",
 * ch. 6 — cited from memory). So one unpivoted LU both checks the domain
 * and gives log det M = Σ log u_kk; then M⁻¹ from the factors.
 */
function hLogdet(d: number, s: number, a: Float64Array, gradA: Float64Array, lu: Float64Array, inv: Float64Array): number {
  for (let t = 0; t < d * d; t++) lu[t] = -a[t];
  for (let i = 0; i < d; i++) lu[i * d + i] += s;
  let logDet = 0;
  for (let k = 0; k < d; k++) {
    const p = lu[k * d + k];
    if (!(p > 0)) return Infinity;
    logDet += Math.log(p);
    const kd = k * d;
    for (let i = k + 1; i < d; i++) {
      const id = i * d;
      const f = lu[id + k] / p;
      lu[id + k] = f;
      if (f === 0) continue;
      for (let j = k + 1; j < d; j++) lu[id + j] -= f * lu[kd + j];
    }
  }
  // inv = U⁻¹ L⁻¹ applied to I, row-oriented triangular solves.
  inv.fill(0);
  for (let i = 0; i < d; i++) inv[i * d + i] = 1;
  for (let i = 0; i < d; i++) {
    const id = i * d;
    for (let k = 0; k < i; k++) {
      const l = lu[id + k];
      if (l === 0) continue;
      const kd = k * d;
      for (let j = 0; j <= k; j++) inv[id + j] -= l * inv[kd + j]; // L⁻¹ is lower triangular
    }
  }
  for (let i = d - 1; i >= 0; i--) {
    const id = i * d;
    for (let k = i + 1; k < d; k++) {
      const u = lu[id + k];
      if (u === 0) continue;
      const kd = k * d;
      for (let j = 0; j < d; j++) inv[id + j] -= u * inv[kd + j];
    }
    const r = 1 / lu[id + i];
    for (let j = 0; j < d; j++) inv[id + j] *= r;
  }
  for (let i = 0; i < d; i++) for (let j = 0; j < d; j++) gradA[i * d + j] = inv[j * d + i];
  return -logDet + d * Math.log(s);
}

/**
 * h(W∘W) for a real d×d matrix W; writes ∇_W = 2 W ∘ ∇_A h into `gradW` when given.
 * Convenience for tests and one-off checks (allocates; learners use createAcyclicity).
 */
export function acyclicity(w: Float64Array, d: number, form: AcyclicityForm = 'expm', gradW?: Float64Array, s = 1): number {
  const a = new Float64Array(d * d);
  for (let t = 0; t < d * d; t++) a[t] = w[t] * w[t];
  const gA = new Float64Array(d * d);
  const h = createAcyclicity(d, form, s)(a, gA);
  if (gradW) for (let t = 0; t < d * d; t++) gradW[t] = 2 * w[t] * gA[t];
  return h;
}
