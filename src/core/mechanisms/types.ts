/**
 * The one interface every mechanism family shares: fit on encoded parent inputs, return a
 * plain, serialisable fitted mechanism; predict into an out buffer (predict.ts).
 */
import type { ColumnKind } from '../frame/frame.js';
import type { FamilyName } from '../scm/compiled-model.js';

export type { FamilyName };

/** Family requested for a node: a concrete family, or `auto` (chosen by held-out fit). */
export type FamilyChoice = 'linear' | 'mlp' | 'auto';

/** Noise model of a continuous node's additive noise. */
export type NoiseChoice = 'gaussian' | 'empirical';

/**
 * A fitted mechanism: plain data (typed arrays and numbers), the parameter layout described in
 * scm/compiled-model.ts. Inputs are the encoded parents (mechanisms/encode.ts).
 */
export interface FittedMechanism {
  readonly family: FamilyName;
  readonly kind: ColumnKind;
  /** Encoded inputs. */
  readonly nIn: number;
  /** Outputs: 1 (continuous, binary) or k (categorical). */
  readonly nOut: number;
  /** Hidden units (MLP families), else 0. */
  readonly hidden: number;
  readonly params: Float64Array;
  /** 'gaussian' | 'empirical' for continuous nodes, 'uniform' for binary/categorical. */
  readonly noise: 'gaussian' | 'empirical' | 'uniform';
  /** Residual standard deviation (continuous), else 0. */
  readonly sigma: number;
  /** Sorted residuals (empirical noise), else empty. */
  readonly residuals: Float64Array;
  /** Continuous output = yCentre + yScale · raw output. */
  readonly yCentre: number;
  readonly yScale: number;
  /** Held-out mean squared error (continuous) or mean log-likelihood (discrete); NaN if not computed. */
  readonly heldOut: number;
  /** Rows the mechanism was fitted on. */
  readonly nFit: number;
}

/** Options of `fitMechanism`; every field has a default. */
export interface MechanismOptions {
  /** Family for continuous and binary nodes (categorical nodes are always softmax). Default 'linear'. */
  readonly family?: FamilyChoice;
  /** Noise model for continuous nodes. Default 'gaussian'. */
  readonly noise?: NoiseChoice;
  /** Ridge penalty λ of linear/logistic/softmax fits on the encoded inputs. Default 1e-6. */
  readonly ridge?: number;
  /** MLP hidden units. Default 10. */
  readonly hidden?: number;
  /** MLP maximum epochs. Default 300. */
  readonly maxEpochs?: number;
  /** MLP early-stopping patience in epochs without held-out improvement. Default 20. */
  readonly patience?: number;
  /** Adam step size. Default 0.01. */
  readonly learningRate?: number;
  /** L2 weight decay on MLP weights (not biases). Default 1e-4. */
  readonly weightDecay?: number;
  /** Mini-batch size. Default 128. */
  readonly batchSize?: number;
  /** Share of rows held out for early stopping and for `auto`. Default 0.2. */
  readonly validationShare?: number;
  /** Most residuals kept for empirical noise (evenly spaced order statistics). Default 2000. */
  readonly maxResiduals?: number;
}

/** MechanismOptions with every default filled in. */
export type ResolvedMechanismOptions = Required<MechanismOptions>;

export function resolveMechanismOptions(o: MechanismOptions = {}): ResolvedMechanismOptions {
  const r: ResolvedMechanismOptions = {
    family: o.family ?? 'linear',
    noise: o.noise ?? 'gaussian',
    ridge: o.ridge ?? 1e-6,
    hidden: o.hidden ?? 10,
    maxEpochs: o.maxEpochs ?? 300,
    patience: o.patience ?? 20,
    learningRate: o.learningRate ?? 0.01,
    weightDecay: o.weightDecay ?? 1e-4,
    batchSize: o.batchSize ?? 128,
    validationShare: o.validationShare ?? 0.2,
    maxResiduals: o.maxResiduals ?? 2000,
  };
  if (!['linear', 'mlp', 'auto'].includes(r.family)) throw new RangeError(`unknown mechanism family "${r.family}"`);
  if (r.noise !== 'gaussian' && r.noise !== 'empirical') throw new RangeError(`unknown noise model "${r.noise}"`);
  if (!(r.ridge >= 0)) throw new RangeError(`ridge must be >= 0, got ${r.ridge}`);
  if (!(Number.isInteger(r.hidden) && r.hidden >= 1)) throw new RangeError(`hidden must be a positive integer, got ${r.hidden}`);
  if (!(r.validationShare > 0 && r.validationShare < 1)) throw new RangeError(`validationShare must be in (0, 1)`);
  if (!(Number.isInteger(r.maxResiduals) && r.maxResiduals >= 1)) throw new RangeError(`maxResiduals must be a positive integer`);
  return r;
}
