/**
 * Linear additive-noise mechanism: x = b + wᵀz + e, fitted by ridge least squares
 * (linalg/lstsq, unpenalised intercept) on the encoded parents z.
 */
import type { Matrix } from '../linalg/matrix.js';
import { lstsq } from '../linalg/lstsq.js';
import { residualSample, residualSigma } from './residual-noise.js';
import type { FittedMechanism, ResolvedMechanismOptions } from './types.js';

/** Fit the linear mechanism on all rows of x, y. */
export function fitLinear(x: Matrix, y: Float64Array, opts: ResolvedMechanismOptions, heldOut = NaN): FittedMechanism {
  const fit = lstsq(x, y, { ridge: opts.ridge, intercept: true });
  const params = new Float64Array(1 + x.cols);
  params[0] = fit.intercept;
  params.set(fit.coef, 1);
  const empirical = opts.noise === 'empirical';
  return {
    family: 'linear',
    kind: 'continuous',
    nIn: x.cols,
    nOut: 1,
    hidden: 0,
    params,
    noise: opts.noise,
    sigma: residualSigma(fit.residuals, 1 + x.cols),
    residuals: empirical ? residualSample(fit.residuals, opts.maxResiduals) : new Float64Array(0),
    yCentre: 0,
    yScale: 1,
    heldOut,
    nFit: x.rows,
  };
}

/** Held-out mean squared error of a linear fit on `train` rows, scored on `valid` rows. */
export function linearHeldOutMse(x: Matrix, y: Float64Array, train: Int32Array, valid: Int32Array, ridge: number): number {
  const p = x.cols;
  const xt = new Float64Array(train.length * p);
  const yt = new Float64Array(train.length);
  for (let r = 0; r < train.length; r++) {
    xt.set(x.data.subarray(train[r] * p, train[r] * p + p), r * p);
    yt[r] = y[train[r]];
  }
  const fit = lstsq({ rows: train.length, cols: p, data: xt }, yt, { ridge, intercept: true });
  let ss = 0;
  for (let r = 0; r < valid.length; r++) {
    const i = valid[r];
    let f = fit.intercept;
    for (let j = 0; j < p; j++) f += fit.coef[j] * x.data[i * p + j];
    const e = y[i] - f;
    ss += e * e;
  }
  return ss / Math.max(1, valid.length);
}
