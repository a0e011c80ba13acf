/**
 * fitMechanism: the single entry point of every mechanism family.
 *
 *  - continuous: `linear` (ridge least squares) or `mlp` (one hidden layer, early stopping);
 *    additive noise Gaussian (residual sd) or empirical (stored residuals).
 *  - binary: `linear` means logistic regression (stats/logisticRegression); `mlp` means
 *    MLP-Bernoulli.
 *  - categorical: always softmax regression (stats/softmaxRegression), whatever the family.
 *  - `auto`: split the rows once (validationShare held out, seeded), fit both candidates on the
 *    rest and score on the held-out rows — mean squared error for continuous nodes, mean
 *    log-likelihood for binary ones. The MLP is chosen only when it beats the linear fit by a
 *    margin (MSE below 99.5% of the linear one; log-likelihood higher by 0.002 nats per row), a
 *    rule of thumb (prefer the simpler model unless the flexible one is better). The margin is
 *    small because the MLP starts from the linear fit (mlp.ts): on random nonlinear SCMs a 2%
 *    margin kept the linear family where small nonlinearities still biased effects by 10%. The linear choice is then refitted on all rows; the MLP keeps its
 *    early-stopped weights (trained on the non-held-out rows). Note that the MLP's held-out
 *    score is also its early-stopping criterion, so it is slightly optimistic.
 */
import type { ColumnKind } from '../frame/frame.js';
import type { Matrix } from '../linalg/matrix.js';
import type { Rng } from '../random/rng.js';
import { logisticRegression } from '../stats/logistic-regression.js';
import { softmaxRegression } from '../stats/softmax-regression.js';
import { fitLinear, linearHeldOutMse } from './linear.js';
import { trainMlp } from './mlp.js';
import { predictMechanism, sigmoid } from './predict.js';
import { residualSample, residualSigma } from './residual-noise.js';
import { type FittedMechanism, type MechanismOptions, resolveMechanismOptions, type ResolvedMechanismOptions } from './types.js';

/** Fewest rows for which a held-out split (MLP, auto) is attempted; below it the linear family is used. */
export const MIN_ROWS_FOR_SPLIT = 20;

/**
 * Fit one mechanism of a node of `kind` on encoded inputs x (rows × nIn) and outcomes y
 * (values, or codes 0..nLevels−1 for discrete nodes). `rng` drives the split and the MLP.
 */
export function fitMechanism(
  x: Matrix,
  y: Float64Array,
  kind: ColumnKind,
  options: MechanismOptions,
  rng: Rng,
  nLevels = 2,
): FittedMechanism {
  const opts = resolveMechanismOptions(options);
  if (y.length !== x.rows) throw new RangeError(`fitMechanism: ${x.rows} input rows but ${y.length} outcomes`);
  if (x.rows === 0) throw new RangeError('fitMechanism: no rows to fit on');
  if (kind === 'categorical') return fitSoftmax(x, y, nLevels, opts);
  const family = x.cols === 0 || x.rows < MIN_ROWS_FOR_SPLIT ? 'linear' : opts.family;
  if (family === 'linear') return kind === 'continuous' ? fitLinear(x, y, opts) : fitLogistic(x, y, opts);

  const { train, valid } = split(x.rows, opts.validationShare, rng);
  const binary = kind === 'binary';
  const mlp = trainMlp(x, y, binary, train, valid, opts, rng);
  if (family === 'auto') {
    if (binary) {
      const ll = logisticHeldOut(x, y, train, valid, opts.ridge);
      if (!(-mlp.heldOutLoss > ll + 0.002)) return fitLogistic(x, y, opts, ll);
    } else {
      const mse = linearHeldOutMse(x, y, train, valid, opts.ridge);
      if (!(mlp.heldOutLoss < 0.995 * mse)) return fitLinear(x, y, opts, mse);
    }
  }
  return mlpMechanism(x, y, binary, mlp.params, mlp.yCentre, mlp.yScale, binary ? -mlp.heldOutLoss : mlp.heldOutLoss, opts);
}

function mlpMechanism(
  x: Matrix,
  y: Float64Array,
  binary: boolean,
  params: Float64Array,
  yCentre: number,
  yScale: number,
  heldOut: number,
  opts: ResolvedMechanismOptions,
): FittedMechanism {
  const base = {
    family: binary ? ('mlp-bernoulli' as const) : ('mlp' as const),
    kind: binary ? ('binary' as const) : ('continuous' as const),
    nIn: x.cols,
    nOut: 1,
    hidden: opts.hidden,
    params,
    noise: binary ? ('uniform' as const) : opts.noise,
    sigma: 0,
    residuals: new Float64Array(0),
    yCentre,
    yScale,
    heldOut,
    nFit: x.rows,
  };
  if (binary) return base;
  const f = predictMechanism(base, x);
  for (let i = 0; i < f.length; i++) f[i] = y[i] - f[i];
  return {
    ...base,
    sigma: residualSigma(f, 0),
    residuals: opts.noise === 'empirical' ? residualSample(f, opts.maxResiduals) : base.residuals,
  };
}

function fitLogistic(x: Matrix, y: Float64Array, opts: ResolvedMechanismOptions, heldOut = NaN): FittedMechanism {
  const fit = logisticRegression(x, y, { ridge: opts.ridge });
  const params = new Float64Array(1 + x.cols);
  params[0] = fit.intercept;
  params.set(fit.coef, 1);
  return {
    family: 'logistic',
    kind: 'binary',
    nIn: x.cols,
    nOut: 1,
    hidden: 0,
    params,
    noise: 'uniform',
    sigma: 0,
    residuals: new Float64Array(0),
    yCentre: 0,
    yScale: 1,
    heldOut,
    nFit: x.rows,
  };
}

function fitSoftmax(x: Matrix, y: Float64Array, k: number, opts: ResolvedMechanismOptions): FittedMechanism {
  if (!(Number.isInteger(k) && k >= 2)) throw new RangeError(`softmax mechanism needs at least 2 levels, got ${k}`);
  const fit = softmaxRegression(x, y, k, { ridge: opts.ridge });
  const p = x.cols;
  const params = new Float64Array(k * (1 + p));
  for (let c = 0; c < k; c++) {
    params[c * (1 + p)] = fit.intercepts[c];
    for (let j = 0; j < p; j++) params[c * (1 + p) + 1 + j] = fit.coef.data[c * p + j];
  }
  return {
    family: 'softmax',
    kind: 'categorical',
    nIn: p,
    nOut: k,
    hidden: 0,
    params,
    noise: 'uniform',
    sigma: 0,
    residuals: new Float64Array(0),
    yCentre: 0,
    yScale: 1,
    heldOut: NaN,
    nFit: x.rows,
  };
}

/** Mean held-out log-likelihood of a logistic fit on `train`, scored on `valid`. */
function logisticHeldOut(x: Matrix, y: Float64Array, train: Int32Array, valid: Int32Array, ridge: number): number {
  const p = x.cols;
  const xt = new Float64Array(train.length * p);
  const yt = new Float64Array(train.length);
  for (let r = 0; r < train.length; r++) {
    xt.set(x.data.subarray(train[r] * p, train[r] * p + p), r * p);
    yt[r] = y[train[r]];
  }
  const fit = logisticRegression({ rows: train.length, cols: p, data: xt }, yt, { ridge });
  let ll = 0;
  for (let r = 0; r < valid.length; r++) {
    const i = valid[r];
    let s = fit.intercept;
    for (let j = 0; j < p; j++) s += fit.coef[j] * x.data[i * p + j];
    const pr = Math.min(1 - 1e-12, Math.max(1e-12, sigmoid(s)));
    ll += y[i] === 1 ? Math.log(pr) : Math.log(1 - pr);
  }
  return ll / Math.max(1, valid.length);
}

/** A seeded random split: `share` of the rows (at least one) held out. */
export function split(n: number, share: number, rng: Rng): { train: Int32Array; valid: Int32Array } {
  const idx = new Int32Array(n);
  for (let i = 0; i < n; i++) idx[i] = i;
  rng.shuffle(idx);
  const nValid = Math.min(n - 1, Math.max(1, Math.round(share * n)));
  return { train: idx.slice(nValid).sort(), valid: idx.slice(0, nValid).sort() };
}
