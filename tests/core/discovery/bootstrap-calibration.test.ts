/**
 * Calibration of bootstrap edge probabilities on two-variable data generated here from
 * stated equations. Directions that the data cannot decide must show up as uncertainty;
 * identifiable directions must get high probability.
 */
import { describe, expect, it } from 'vitest';
import { makeFrame, type Frame } from '../../../src/core/frame/frame.js';
import { Rng } from '../../../src/core/random/rng.js';
import { anmPairLearner } from '../../../src/core/discovery/anm-direction.js';
import { runBootstrap } from '../../../src/core/discovery/bootstrap.js';
import { edgeProbabilityOf } from '../../../src/core/discovery/dag-set.js';
import { availableLearners } from '../../../src/core/discovery/registry.js';

type Noise = (rng: Rng) => number;
const gaussian: Noise = (rng) => rng.normal();
const uniform: Noise = (rng) => Math.sqrt(3) * (2 * rng.uniform() - 1); // variance 1

/** x ~ noise, y = f(x) + s·noise, n rows. */
function pair(n: number, seed: number, noise: Noise, f: (x: number) => number, s: number): Frame {
  const rng = Rng.create(seed);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    x[r] = noise(rng);
    y[r] = f(x[r]) + s * noise(rng);
  }
  return makeFrame([
    { name: 'x', kind: 'continuous', values: x },
    { name: 'y', kind: 'continuous', values: y },
  ]);
}

const available = availableLearners();

describe('bootstrap calibration, two variables', () => {
  it('linear Gaussian x→y (not identifiable): PC gives each direction probability 1/2', async () => {
    // y = 0.8x + 0.6e, x and e standard normal: a strong dependence, PC finds x—y in every
    // resample, its 2-node CPDAG is undirected, and the merge splits it 1/2–1/2.
    const frame = pair(500, 1, gaussian, (x) => 0.8 * x, 0.6);
    const set = await runBootstrap(frame, {}, { learner: 'pc' }, { replicates: 20, seed: 7, threads: 1 });
    const fwd = edgeProbabilityOf(set, 'x', 'y');
    const bwd = edgeProbabilityOf(set, 'y', 'x');
    expect(fwd).toBeGreaterThanOrEqual(0.3);
    expect(fwd).toBeLessThanOrEqual(0.7);
    expect(bwd).toBeGreaterThanOrEqual(0.3);
    expect(bwd).toBeLessThanOrEqual(0.7);
    expect(fwd).toBeCloseTo(0.5, 12);
  });

  // On a standardised pair x→y and y→x have exactly the same least-squares score, so the learner's
  // local search breaks the tie with the replicate's seed (it used to return the empty graph in
  // every resample: the augmented Lagrangian's path from W = 0 stays symmetric and shrinks to 0).
  it.runIf(available.has('linear-notears'))('linear Gaussian x→y: linear-notears on standardised data stays between 0.3 and 0.7', async () => {
    const frame = pair(500, 2, gaussian, (x) => 0.8 * x, 0.6);
    const set = await runBootstrap(frame, {}, { learner: 'linear-notears', standardise: true }, { replicates: 30, seed: 3, threads: 1 });
    const fwd = edgeProbabilityOf(set, 'x', 'y');
    const bwd = edgeProbabilityOf(set, 'y', 'x');
    expect(fwd).toBeGreaterThanOrEqual(0.3);
    expect(fwd).toBeLessThanOrEqual(0.7);
    expect(bwd).toBeGreaterThanOrEqual(0.3);
    expect(bwd).toBeLessThanOrEqual(0.7);
    // The dependence itself is found in every resample.
    expect(fwd + bwd).toBeCloseTo(1, 12);
  });

  it.runIf(available.has('direct-lingam'))('linear x→y with uniform noise (Shimizu et al. 2011): DirectLiNGAM puts ≥ 0.9 on x→y', async () => {
    const frame = pair(1000, 4, uniform, (x) => 0.8 * x, 0.6);
    const set = await runBootstrap(frame, {}, { learner: 'direct-lingam' }, { replicates: 20, seed: 5, threads: 1 });
    expect(edgeProbabilityOf(set, 'x', 'y')).toBeGreaterThanOrEqual(0.9);
  });

  it('nonlinear x→y with Gaussian noise (Hoyer et al. 2009): the ANM direction test puts ≥ 0.9 on x→y', async () => {
    // y = tanh(2x) + 0.5x³ + 0.5e: an additive noise model with a nonlinear f, identifiable.
    const frame = pair(500, 6, gaussian, (x) => Math.tanh(2 * x) + 0.5 * x * x * x, 0.5);
    const set = await runBootstrap(frame, {}, { learner: 'pc' }, { replicates: 20, seed: 8, learner: anmPairLearner });
    expect(edgeProbabilityOf(set, 'x', 'y')).toBeGreaterThanOrEqual(0.9);
  });

  // Not checked with mlp-notears: on this standardised pair its least-squares score prefers
  // y→x in every resample (P(x→y) = 0 at B = 20, measured while writing this test). A squared-
  // error score identifies the direction only under assumptions such as equal noise variances,
  // which standardisation breaks; the ANM test above uses independence of residuals instead.
});
