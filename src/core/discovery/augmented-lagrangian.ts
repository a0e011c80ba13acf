import { minimiseOwlqn, type OwlqnOptions } from './optim/owlqn.js';

/** ρ and α of the augmented Lagrangian; the learner's objective reads them on every call. */
export interface PenaltyState {
  rho: number;
  alpha: number;
}

/** What the outer loop did, for the learner's notes. */
export interface LagrangianRun {
  readonly outer: number;
  readonly inner: number;
  readonly evaluations: number;
  /** Acyclicity h at the returned parameters, and the final ρ. */
  readonly h: number;
  readonly rho: number;
}

/**
 * The outer loop of the NOTEARS learners (Zheng, Aragam, Ravikumar & Xing 2018, Algorithm 1;
 * shared by notears-linear.ts and notears-mlp.ts): from the current parameters minimise
 * F(θ) + ρ/2·h(θ)² + α·h(θ) with OWL-QN (the objective closes over `penalty`), raise ρ ×10
 * until h falls below ¼ of its previous value, then α ← α + ρh; stop at h ≤ hTol or
 * ρ ≥ rhoMax. `theta` is updated in place.
 */
export function augmentedLagrangian(
  theta: Float64Array,
  penalty: PenaltyState,
  objective: (x: Float64Array, g: Float64Array) => number,
  hOf: (x: Float64Array) => number,
  inner: OwlqnOptions,
  o: { readonly maxOuter: number; readonly rhoMax: number; readonly hTol: number },
): LagrangianRun {
  const next = new Float64Array(theta.length);
  let hCur = Infinity;
  let outer = 0;
  let iterations = 0;
  let evaluations = 0;
  for (; outer < o.maxOuter; outer++) {
    let hNew = Infinity;
    while (penalty.rho < o.rhoMax) {
      next.set(theta);
      const res = minimiseOwlqn(objective, next, inner);
      iterations += res.iterations;
      evaluations += res.evaluations;
      hNew = hOf(next);
      if (hNew > 0.25 * hCur) penalty.rho *= 10;
      else break;
    }
    theta.set(next);
    hCur = hNew;
    penalty.alpha += penalty.rho * hCur;
    if (hCur <= o.hTol || penalty.rho >= o.rhoMax) break;
  }
  return { outer, inner: iterations, evaluations, h: hCur, rho: penalty.rho };
}
