import type { Rng } from './rng.js';

/** Fills `out` with independent standard normal draws from `rng` and returns it. */
export function fillNormal(rng: Rng, out: Float64Array, mean = 0, sd = 1): Float64Array {
  for (let i = 0; i < out.length; i++) out[i] = mean + sd * rng.normal();
  return out;
}

/**
 * Laplace (double exponential) draw with location 0 and the given scale b (default 1;
 * variance 2b²), by inverting the cdf: x = −b·sign(u)·ln(1 − 2|u|), u uniform on (−1/2, 1/2).
 */
export function laplace(rng: Rng, scale = 1): number {
  const u = rng.uniform() - 0.5;
  // uniform() is in [0, 1), so |u| ≤ 1/2 and 1 − 2|u| ≥ 0; u = −1/2 would give −Infinity, nudged.
  const a = Math.abs(u);
  const t = 1 - 2 * a;
  const v = -scale * Math.log(t > 0 ? t : Number.MIN_VALUE);
  return u < 0 ? -v : v;
}

/** Exponential draw with the given rate (default 1; mean 1/rate), x = −ln(1 − u)/rate. */
export function exponential(rng: Rng, rate = 1): number {
  return -Math.log1p(-rng.uniform()) / rate;
}

/** Uniform draw on [a, b). */
export function uniformRange(rng: Rng, a: number, b: number): number {
  return a + (b - a) * rng.uniform();
}
