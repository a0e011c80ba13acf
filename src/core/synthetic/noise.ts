import { exponential, fillNormal, laplace, uniformRange } from '../random/distributions.js';
import type { Rng } from '../random/rng.js';

/** Additive noise families of the benchmark generator. */
export type NoiseKind = 'gaussian' | 'laplace' | 'uniform' | 'exponential';

/**
 * Additive noise e with mean 0 and standard deviation `scale` for every kind:
 * - gaussian: N(0, scale²);
 * - laplace: Laplace(0, b) with b = scale/√2;
 * - uniform: U(−a, a) with a = scale·√3;
 * - exponential: Exp(rate 1/scale) − scale (centred, so skewed but mean 0).
 * Equal standard deviations make the families comparable in signal-to-noise ratio.
 */
export interface NoiseSpec {
  readonly kind: NoiseKind;
  /** Standard deviation of the noise (> 0). */
  readonly scale: number;
}

export const NOISE_KINDS: readonly NoiseKind[] = ['gaussian', 'laplace', 'uniform', 'exponential'];

/** Fill `out` with independent draws of the noise `spec` (allocates nothing). */
export function fillNoise(spec: NoiseSpec, rng: Rng, out: Float64Array, count: number = out.length): void {
  const s = spec.scale;
  if (!(s >= 0)) throw new RangeError(`noise scale must be ≥ 0, got ${s}`);
  switch (spec.kind) {
    case 'gaussian': {
      const view = count === out.length ? out : out.subarray(0, count);
      fillNormal(rng, view);
      for (let i = 0; i < count; i++) out[i] *= s;
      return;
    }
    case 'laplace': {
      const b = s / Math.SQRT2;
      for (let i = 0; i < count; i++) out[i] = b * laplace(rng);
      return;
    }
    case 'uniform': {
      const a = s * Math.sqrt(3);
      for (let i = 0; i < count; i++) out[i] = uniformRange(rng, -a, a);
      return;
    }
    case 'exponential': {
      for (let i = 0; i < count; i++) out[i] = s * (exponential(rng) - 1);
      return;
    }
    default:
      throw new TypeError(`unknown noise kind "${String((spec as NoiseSpec).kind)}"; use ${NOISE_KINDS.join(', ')}`);
  }
}
