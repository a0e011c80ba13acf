/**
 * A model's spec: what to fit and how. Stored with the model and copied into every
 * version, so a version says exactly how it was made.
 */
import type { LearnerName } from '../../core/discovery/learner.js';

export type MechanismFamily = 'auto' | 'linear' | 'mlp';
export type NoiseModel = 'gaussian' | 'empirical';

export interface ModelSpec {
  readonly datasetId: string;
  readonly name: string;
  /** Variables to use, in this order; default every column of the dataset. */
  readonly variables: readonly string[];
  /** The treatment and outcome of interest, when the user has them (used by the report and defaults). */
  readonly treatment?: string;
  readonly outcome?: string;
  readonly knowledge: {
    readonly tiers?: readonly (readonly string[])[];
    readonly forbidden?: ReadonlyArray<readonly [string, string]>;
    readonly required?: ReadonlyArray<readonly [string, string]>;
  };
  /** When given, learning is skipped: this is the one graph (weight 1). */
  readonly fixedGraph?: { readonly edges: ReadonlyArray<readonly [string, string]> };
  readonly learner: LearnerName;
  /** Learner-specific options (alpha, lambda, threshold, …), validated by the learner. */
  readonly learnerOptions: Readonly<Record<string, unknown>>;
  /** Bootstrap replicates (one graph each). */
  readonly replicates: number;
  readonly mechanisms: {
    readonly family: MechanismFamily;
    readonly noise: NoiseModel;
    /** Per-variable family overrides. */
    readonly perNode?: Readonly<Record<string, MechanismFamily>>;
  };
  /** Bound on the reference sample kept in the version (stratified). */
  readonly referenceRows: number;
  readonly seed: number;
}

export const SPEC_DEFAULTS = {
  learner: 'auto' as LearnerName,
  replicates: 20,
  family: 'auto' as MechanismFamily,
  noise: 'empirical' as NoiseModel,
  referenceRows: 5000,
  seed: 1,
};

/** Fewest rows a fit accepts (bootstrap resamples and held-out splits need room). */
export const MIN_FIT_ROWS = 30;
