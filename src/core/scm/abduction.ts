/**
 * Abduction: the noise of each reference row that reproduces its observed value under the
 * coupling of kernel.ts.
 *  - continuous (additive noise): e = x − f(pa), exactly determined.
 *  - binary: the observed x only tells which interval u lies in — x = 1 ⇔ u ∈ [0, p),
 *    x = 0 ⇔ u ∈ [p, 1) with p = P(x = 1 | pa). Under the model u is uniform, so its posterior
 *    given x is uniform on that interval; we store one draw from it.
 *  - categorical: u uniform on [P(0)+…+P(c−1), P(0)+…+P(c)) for observed level c.
 * For discrete nodes the counterfactual is then the inverse-CDF (monotone) coupling: under an
 * intervention that moves P(x = 1) from p to p′ a unit switches only if its u lies between.
 * This is one choice among the counterfactual couplings consistent with the data (discrete
 * counterfactuals are not identified by observational data alone); it is the monotone one.
 */
import type { Rng } from '../random/rng.js';
import { type CompiledModel, KIND_BINARY, KIND_CONTINUOUS } from './compiled-model.js';

/**
 * Noise of node j for n units into out[outOff + i], given its mechanism output `mean`
 * (mechanismOutput on the observed parents) and the observed values observed[obsOff + i].
 */
export function abductNoise(
  model: CompiledModel,
  j: number,
  mean: Float64Array,
  observed: Float64Array,
  obsOff: number,
  n: number,
  rng: Rng,
  out: Float64Array,
  outOff: number,
): void {
  const kind = model.kinds[j];
  if (kind === KIND_CONTINUOUS) {
    for (let i = 0; i < n; i++) out[outOff + i] = observed[obsOff + i] - mean[i];
  } else if (kind === KIND_BINARY) {
    for (let i = 0; i < n; i++) {
      const p = mean[i];
      const v = rng.uniform();
      out[outOff + i] = observed[obsOff + i] === 1 ? v * p : p + v * (1 - p);
    }
  } else {
    const k = model.nLevels[j];
    for (let i = 0; i < n; i++) {
      const c = observed[obsOff + i];
      let lo = 0;
      for (let cc = 0; cc < c; cc++) lo += mean[cc * n + i];
      const pc = c === k - 1 ? 1 - lo : mean[c * n + i];
      out[outOff + i] = lo + rng.uniform() * Math.max(0, pc);
    }
  }
}
