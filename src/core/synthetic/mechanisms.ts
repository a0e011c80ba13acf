import type { Rng } from '../random/rng.js';

/** Random mechanism families of the benchmark generator. */
export type MechanismFamily = 'linear' | 'mlp' | 'smooth';

export const MECHANISM_FAMILIES: readonly MechanismFamily[] = ['linear', 'mlp', 'smooth'];

/** f(x) = Σ w_i x_i, weights uniform in ±[0.5, 2]. */
export interface LinearMechanism {
  readonly family: 'linear';
  readonly inDim: number;
  readonly weights: Float64Array;
}

/**
 * f(x) = Σ_h v_h σ(Σ_i W_hi x_i): one hidden layer of sigmoid units, no biases; W and v uniform
 * in ±[0.5, 2]. This follows common benchmark practice for nonlinear structure learning (the
 * random-MLP simulation described by Zheng et al. 2020, 100 hidden units).
 */
export interface MlpMechanism {
  readonly family: 'mlp';
  readonly inDim: number;
  readonly hidden: number;
  /** hidden × inDim, row-major. */
  readonly w1: Float64Array;
  readonly w2: Float64Array;
}

/**
 * Gaussian-process-like random smooth function by random Fourier features (Rahimi & Recht
 * 2007): f(x) = amp·√(2/K) Σ_k a_k cos(ω_k·x + b_k) with a_k ~ N(0, 1), ω_k ~ N(0, I/ℓ²),
 * b_k ~ U(0, 2π). As K grows this is a draw from a GP with squared-exponential kernel of
 * length-scale ℓ and variance amp². Defaults ℓ = 1 and amp = 1: a joint (not additive) GP
 * draw over all parents with unit bandwidth, the kind of "random smooth" mechanism used in
 * nonlinear structure-learning benchmarks (e.g. Lachapelle et al. 2020; from memory).
 */
export interface SmoothMechanism {
  readonly family: 'smooth';
  readonly inDim: number;
  readonly features: number;
  /** features × inDim, row-major. */
  readonly omega: Float64Array;
  readonly phase: Float64Array;
  /** amp·√(2/K)·a_k, folded together. */
  readonly coef: Float64Array;
}

export type Mechanism = LinearMechanism | MlpMechanism | SmoothMechanism;

/** Tuning of {@link randomMechanism}; the defaults are the ones documented on each family. */
export interface MechanismOptions {
  /** Hidden units of 'mlp' (default 100). */
  readonly hidden?: number;
  /** Random features of 'smooth' (default 50). */
  readonly features?: number;
  /** Length-scale ℓ of 'smooth' (default 1). */
  readonly lengthScale?: number;
  /** Amplitude (GP standard deviation) of 'smooth' (default 1). */
  readonly amplitude?: number;
}

/** Uniform in ±[0.5, 2]: magnitude U(0.5, 2) with a random sign. */
export function signedUniformWeight(rng: Rng): number {
  const m = 0.5 + 1.5 * rng.uniform();
  return rng.uniform() < 0.5 ? -m : m;
}

/** A random mechanism of `family` with `inDim` inputs. */
export function randomMechanism(family: MechanismFamily, inDim: number, rng: Rng, options: MechanismOptions = {}): Mechanism {
  if (!Number.isInteger(inDim) || inDim < 0) throw new RangeError(`mechanism input width must be a whole number ≥ 0, got ${inDim}`);
  switch (family) {
    case 'linear': {
      const weights = new Float64Array(inDim);
      for (let i = 0; i < inDim; i++) weights[i] = signedUniformWeight(rng);
      return { family, inDim, weights };
    }
    case 'mlp': {
      const hidden = options.hidden ?? 100;
      const w1 = new Float64Array(hidden * inDim);
      for (let i = 0; i < w1.length; i++) w1[i] = signedUniformWeight(rng);
      const w2 = new Float64Array(hidden);
      for (let h = 0; h < hidden; h++) w2[h] = signedUniformWeight(rng);
      return { family, inDim, hidden, w1, w2 };
    }
    case 'smooth': {
      const k = options.features ?? 50;
      const ell = options.lengthScale ?? 1;
      const omega = new Float64Array(k * inDim);
      for (let i = 0; i < omega.length; i++) omega[i] = rng.normal() / ell;
      const phase = new Float64Array(k);
      const coef = new Float64Array(k);
      const amp = options.amplitude ?? 1;
      const c = amp * Math.sqrt(2 / k);
      for (let f = 0; f < k; f++) {
        phase[f] = 2 * Math.PI * rng.uniform();
        coef[f] = c * rng.normal();
      }
      return { family, inDim, features: k, omega, phase, coef };
    }
    default:
      throw new TypeError(`unknown mechanism family "${String(family)}"; use ${MECHANISM_FAMILIES.join(', ')}`);
  }
}

/**
 * Evaluate `m` on n rows of `x` (n × m.inDim, row-major) into out[0..n) — adds to `out` when
 * `accumulate`, else overwrites. Allocates nothing.
 */
export function evaluateMechanism(m: Mechanism, x: Float64Array, n: number, out: Float64Array, accumulate = false): void {
  const p = m.inDim;
  if (!accumulate) out.fill(0, 0, n);
  if (p === 0) return;
  if (m.family === 'linear') {
    const w = m.weights;
    for (let r = 0; r < n; r++) {
      let s = 0;
      const o = r * p;
      for (let i = 0; i < p; i++) s += w[i] * x[o + i];
      out[r] += s;
    }
  } else if (m.family === 'mlp') {
    const { hidden, w1, w2 } = m;
    for (let r = 0; r < n; r++) {
      const o = r * p;
      let s = 0;
      for (let h = 0; h < hidden; h++) {
        let z = 0;
        const hw = h * p;
        for (let i = 0; i < p; i++) z += w1[hw + i] * x[o + i];
        s += w2[h] / (1 + Math.exp(-z));
      }
      out[r] += s;
    }
  } else {
    const { features, omega, phase, coef } = m;
    for (let r = 0; r < n; r++) {
      const o = r * p;
      let s = 0;
      for (let f = 0; f < features; f++) {
        let z = phase[f];
        const fw = f * p;
        for (let i = 0; i < p; i++) z += omega[fw + i] * x[o + i];
        s += coef[f] * Math.cos(z);
      }
      out[r] += s;
    }
  }
}
