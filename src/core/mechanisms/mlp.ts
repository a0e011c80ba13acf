/**
 * One-hidden-layer perceptron mechanisms (tanh-shaped hidden units — activation.ts — and one linear output):
 *  - continuous (`mlp`): x = yCentre + yScale·net(z) + e, squared loss on the standardised target;
 *  - binary (`mlp-bernoulli`): P(x = 1) = sigmoid(net(z)), cross-entropy loss.
 * Trained by mini-batch Adam (Kingma & Ba 2015) with L2 weight decay on the weights, Glorot
 * uniform initialisation (Glorot & Bengio 2010), and early stopping on a held-out split: the
 * parameters of the epoch with the best held-out loss are kept.
 */
import type { Matrix } from '../linalg/matrix.js';
import type { Rng } from '../random/rng.js';
import { tanhApprox } from './activation.js';
import { sigmoid } from './predict.js';
import type { ResolvedMechanismOptions } from './types.js';

/** Result of `trainMlp`. */
export interface MlpFit {
  /** W1 (h × p), b1 (h), w2 (h), b2 (1). */
  readonly params: Float64Array;
  readonly yCentre: number;
  readonly yScale: number;
  /** Best held-out loss: mean squared error in the units of y (continuous) or mean cross-entropy (binary). */
  readonly heldOutLoss: number;
  readonly epochs: number;
}

const BETA1 = 0.9;
const BETA2 = 0.999;
const EPS = 1e-8;

/**
 * Train on rows `train` of (x, y), early-stopping on rows `valid`. `binary` selects the
 * Bernoulli output. Allocates its buffers once.
 */
export function trainMlp(
  x: Matrix,
  y: Float64Array,
  binary: boolean,
  train: Int32Array,
  valid: Int32Array,
  opts: ResolvedMechanismOptions,
  rng: Rng,
): MlpFit {
  const p = x.cols;
  const h = opts.hidden;
  const xd = x.data;
  const nPar = h * p + 2 * h + 1;
  const oB1 = h * p;
  const oW2 = oB1 + h;
  const oB2 = oW2 + h;

  // Target scaling (continuous): standardise on the training rows.
  let yCentre = 0;
  let yScale = 1;
  if (!binary) {
    let s = 0;
    for (let r = 0; r < train.length; r++) s += y[train[r]];
    yCentre = s / Math.max(1, train.length);
    let v = 0;
    for (let r = 0; r < train.length; r++) v += (y[train[r]] - yCentre) ** 2;
    yScale = Math.sqrt(v / Math.max(1, train.length - 1));
    if (!(yScale > 0)) yScale = 1;
  }

  const w = new Float64Array(nPar);
  const a1 = Math.sqrt(6 / (p + h));
  for (let i = 0; i < h * p; i++) w[i] = (2 * rng.uniform() - 1) * a1;
  const a2 = Math.sqrt(6 / (h + 1));
  for (let u = 0; u < h; u++) w[oW2 + u] = (2 * rng.uniform() - 1) * a2;
  if (binary) {
    let s = 0;
    for (let r = 0; r < train.length; r++) s += y[train[r]];
    const pm = Math.min(1 - 1e-6, Math.max(1e-6, s / Math.max(1, train.length)));
    w[oB2] = Math.log(pm / (1 - pm));
  }

  const g = new Float64Array(nPar);
  const m1 = new Float64Array(nPar);
  const m2 = new Float64Array(nPar);
  const best = w.slice();
  const t = new Float64Array(h);
  const order = Int32Array.from(train);
  const bs = Math.max(1, Math.min(opts.batchSize, train.length));
  const lr = opts.learningRate;
  const wd = opts.weightDecay;

  const lossOn = (rows: Int32Array): number => {
    let loss = 0;
    for (let r = 0; r < rows.length; r++) {
      const i = rows[r];
      let s = w[oB2];
      for (let u = 0; u < h; u++) {
        let a = w[oB1 + u];
        for (let j = 0; j < p; j++) a += w[u * p + j] * xd[i * p + j];
        s += w[oW2 + u] * tanhApprox(a);
      }
      if (binary) {
        const pr = Math.min(1 - 1e-12, Math.max(1e-12, sigmoid(s)));
        loss -= y[i] === 1 ? Math.log(pr) : Math.log(1 - pr);
      } else {
        const e = (y[i] - yCentre) / yScale - s;
        loss += e * e;
      }
    }
    return loss / Math.max(1, rows.length);
  };

  let bestLoss = lossOn(valid);
  let sinceBest = 0;
  let step = 0;
  let epoch = 0;
  for (epoch = 1; epoch <= opts.maxEpochs; epoch++) {
    rng.shuffle(order);
    for (let start = 0; start < order.length; start += bs) {
      const end = Math.min(order.length, start + bs);
      g.fill(0);
      for (let r = start; r < end; r++) {
        const i = order[r];
        let s = w[oB2];
        for (let u = 0; u < h; u++) {
          let a = w[oB1 + u];
          for (let j = 0; j < p; j++) a += w[u * p + j] * xd[i * p + j];
          t[u] = tanhApprox(a);
          s += w[oW2 + u] * t[u];
        }
        const ds = binary ? sigmoid(s) - y[i] : s - (y[i] - yCentre) / yScale;
        g[oB2] += ds;
        for (let u = 0; u < h; u++) {
          g[oW2 + u] += ds * t[u];
          const da = ds * w[oW2 + u] * (1 - t[u] * t[u]);
          g[oB1 + u] += da;
          for (let j = 0; j < p; j++) g[u * p + j] += da * xd[i * p + j];
        }
      }
      const inv = 1 / (end - start);
      step++;
      const c1 = 1 - Math.pow(BETA1, step);
      const c2 = 1 - Math.pow(BETA2, step);
      for (let k = 0; k < nPar; k++) {
        let gk = g[k] * inv;
        if (k < oB1 || (k >= oW2 && k < oB2)) gk += wd * w[k];
        m1[k] = BETA1 * m1[k] + (1 - BETA1) * gk;
        m2[k] = BETA2 * m2[k] + (1 - BETA2) * gk * gk;
        w[k] -= (lr * (m1[k] / c1)) / (Math.sqrt(m2[k] / c2) + EPS);
      }
    }
    const vl = lossOn(valid);
    if (vl < bestLoss - 1e-9) {
      bestLoss = vl;
      best.set(w);
      sinceBest = 0;
    } else if (++sinceBest >= opts.patience) break;
  }
  return {
    params: best,
    yCentre,
    yScale,
    heldOutLoss: binary ? bestLoss : bestLoss * yScale * yScale,
    epochs: Math.min(epoch, opts.maxEpochs),
  };
}
