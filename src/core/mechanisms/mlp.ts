/**
 * One-hidden-layer perceptron mechanisms with a linear skip connection:
 *  - continuous (`mlp`):  x = lin(z) + yCentre + yScale·net(z) + e;
 *  - binary (`mlp-bernoulli`): P(x = 1) = sigmoid(lin(z) + net(z));
 * where lin(z) = L0 + Σ L_k z_k is fitted first on the training rows (ridge least squares, or
 * logistic regression for a binary node) and kept fixed, and net(z) = b2 + Σ_u w2_u·a(b1_u +
 * W1_u·z) learns what the linear part misses (a = activation.ts, tanh-shaped). The output
 * weights start at zero, so training starts from the linear fit and early stopping can only
 * keep or improve its held-out loss.
 *
 * net is trained by mini-batch Adam (Kingma & Ba 2015) with L2 weight decay on W1 and w2,
 * Glorot uniform initialisation of W1 (Glorot & Bengio 2010), and early stopping on a held-out
 * split: the parameters of the epoch with the best held-out loss are kept.
 */
import type { Matrix } from '../linalg/matrix.js';
import { lstsq } from '../linalg/lstsq.js';
import type { Rng } from '../random/rng.js';
import { logisticRegression } from '../stats/logistic-regression.js';
import { tanhApprox } from './activation.js';
import { sigmoid } from './predict.js';
import type { ResolvedMechanismOptions } from './types.js';

/** Result of `trainMlp`. */
export interface MlpFit {
  /** W1 (h × p), b1 (h), w2 (h), b2 (1), then the linear part L0, L1..Lp. */
  readonly params: Float64Array;
  readonly yCentre: number;
  readonly yScale: number;
  /** Best held-out loss: mean squared error in the units of y (continuous) or mean cross-entropy (binary). */
  readonly heldOutLoss: number;
  readonly epochs: number;
}

/** Number of parameters of an MLP mechanism with p inputs and h hidden units. */
export function mlpParamCount(p: number, h: number): number {
  return h * p + 2 * h + 1 + 1 + p;
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
  const nNet = h * p + 2 * h + 1;
  const nPar = mlpParamCount(p, h);
  const oB1 = h * p;
  const oW2 = oB1 + h;
  const oB2 = oW2 + h;
  const oLin = oB2 + 1;
  const w = new Float64Array(nPar);

  // Linear part on the training rows, then the per-row base (prediction or logit).
  const xt = new Float64Array(train.length * p);
  const yt = new Float64Array(train.length);
  for (let r = 0; r < train.length; r++) {
    xt.set(xd.subarray(train[r] * p, train[r] * p + p), r * p);
    yt[r] = y[train[r]];
  }
  const xm: Matrix = { rows: train.length, cols: p, data: xt };
  if (binary) {
    const fit = logisticRegression(xm, yt, { ridge: Math.max(opts.ridge, 1e-6) });
    w[oLin] = fit.intercept;
    w.set(fit.coef, oLin + 1);
  } else {
    const fit = lstsq(xm, yt, { ridge: opts.ridge, intercept: true });
    w[oLin] = fit.intercept;
    w.set(fit.coef, oLin + 1);
  }
  const base = new Float64Array(x.rows);
  for (let i = 0; i < x.rows; i++) {
    let s = w[oLin];
    for (let j = 0; j < p; j++) s += w[oLin + 1 + j] * xd[i * p + j];
    base[i] = s;
  }

  // Target scaling (continuous): standardise the linear residual on the training rows.
  let yCentre = 0;
  let yScale = 1;
  if (!binary) {
    let s = 0;
    for (let r = 0; r < train.length; r++) s += y[train[r]] - base[train[r]];
    yCentre = s / Math.max(1, train.length);
    let v = 0;
    for (let r = 0; r < train.length; r++) v += (y[train[r]] - base[train[r]] - yCentre) ** 2;
    yScale = Math.sqrt(v / Math.max(1, train.length - 1));
    if (!(yScale > 0)) yScale = 1;
  }

  const a1 = Math.sqrt(6 / (p + h));
  for (let i = 0; i < h * p; i++) w[i] = (2 * rng.uniform() - 1) * a1;
  // b1 = 0, w2 = 0, b2 = 0: the network starts as the linear fit.

  const g = new Float64Array(nNet);
  const m1 = new Float64Array(nNet);
  const m2 = new Float64Array(nNet);
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
        const pr = Math.min(1 - 1e-12, Math.max(1e-12, sigmoid(base[i] + s)));
        loss -= y[i] === 1 ? Math.log(pr) : Math.log(1 - pr);
      } else {
        const e = (y[i] - base[i] - yCentre) / yScale - s;
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
        const ds = binary ? sigmoid(base[i] + s) - y[i] : s - (y[i] - base[i] - yCentre) / yScale;
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
      for (let k = 0; k < nNet; k++) {
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
