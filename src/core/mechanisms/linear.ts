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
