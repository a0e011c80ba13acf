/**
 * The compiled structural causal model: one flat, versioned artifact made of typed arrays.
 *
 * Everything a query needs lives here — variables and their encoders, the weighted graph set
 * with a topological order per graph, the fitted mechanisms (parameters concatenated in one
 * Float64Array, addressed through offsets), and a bounded, stratified reference sample with
 * its abducted noise. No per-node objects are touched in hot loops: simulation reads the
 * tables below by index. `serialise`/`deserialise` (serialise.ts) round-trip it bit for bit.
 *
 * Index conventions (p = number of variables, G = number of graphs, M = number of mechanisms,
 * R = number of reference rows):
 *  - variables are numbered 0..p-1 in `names` order;
 *  - per-graph tables are graph-major: `adjacency[g*p*p + i*p + j] = 1` marks i→j in graph g,
 *    `topoOrder[g*p + k]` is the k-th node of graph g's order, `mechanismOf[g*p + j]` is the
 *    mechanism of node j in graph g (a mechanism is shared by every graph where node j has the
 *    same parent set);
 *  - reference values and abducted noise are node-major columns: `referenceValues[j*R + r]`,
 *    `referenceNoise[m*R + r]` (noise is per mechanism, so graphs that share a mechanism share
 *    its noise).
 */

/** Version of the layout below; bumped on any change of fields or their meaning. */
export const MODEL_FORMAT_VERSION = 1;

/** Variable kinds as stored in `kinds`. */
export const KIND_CONTINUOUS = 0;
export const KIND_BINARY = 1;
export const KIND_CATEGORICAL = 2;

/** Mechanism families as stored in column MECH_FAMILY of `mechTable`. */
export const FAMILY_LINEAR = 0;
export const FAMILY_MLP = 1;
export const FAMILY_LOGISTIC = 2;
export const FAMILY_MLP_BERNOULLI = 3;
export const FAMILY_SOFTMAX = 4;
export const FAMILY_NAMES = ['linear', 'mlp', 'logistic', 'mlp-bernoulli', 'softmax'] as const;
export type FamilyName = (typeof FAMILY_NAMES)[number];

/** Noise models as stored in column MECH_NOISE of `mechTable`. */
export const NOISE_GAUSSIAN = 0;
export const NOISE_EMPIRICAL = 1;
/** Binary and categorical nodes: the noise is a uniform u pushed through the inverse CDF. */
export const NOISE_UNIFORM = 2;

/**
 * Columns of one row of `mechTable` (Int32, MECH_STRIDE per mechanism).
 * Parameters of a mechanism with nIn encoded inputs, h hidden units and k outputs (the MLP hidden
 * activation is mechanisms/activation.ts, a rational approximation of tanh)
 * (`mechParams[paramOffset ..]`):
 *  - linear / logistic: [b, w_1..w_nIn]                       (1 + nIn values)
 *  - softmax:           k rows of [b_c, w_c1..w_cnIn]          (k(1 + nIn))
 *  - mlp / mlp-bernoulli (one hidden layer, activation mechanisms/activation.ts, one output):
 *       W1 (h × nIn, row-major), b1 (h), w2 (h), b2 (1), then a linear skip part
 *       L0, L1..L_nIn                                         (h·nIn + 2h + 2 + nIn)
 *       output: mlp lin + (yCentre + yScale·net), mlp-bernoulli sigmoid(lin + net)
 * Encoded inputs (ENCODING_ADDITIVE): parents in ascending index order; a continuous parent contributes one input
 * (x − centre)/scale, a binary parent one input (0/1), a categorical parent with k levels
 * k−1 indicator inputs for levels 1..k−1 (level 0 is the reference).
 * Continuous outputs are yCentre + yScale · (linear output), or as above for the MLP; binary outputs are
 * P(x = 1) = sigmoid(output); categorical outputs softmax over the k rows.
 */
export const MECH_FAMILY = 0;
export const MECH_NODE = 1;
export const MECH_NOISE = 2;
export const MECH_N_IN = 3;
export const MECH_N_OUT = 4;
export const MECH_HIDDEN = 5;
export const MECH_PARAM_OFFSET = 6;
export const MECH_PARAM_COUNT = 7;
export const MECH_PARENT_OFFSET = 8;
export const MECH_PARENT_COUNT = 9;
export const MECH_RESID_OFFSET = 10;
export const MECH_RESID_COUNT = 11;
export const MECH_N_FIT = 12;
/** ENCODING_ADDITIVE or ENCODING_JOINT_CELLS (see below). */
export const MECH_ENCODING = 13;
export const MECH_STRIDE = 14;

/** Inputs are the parents' encodings side by side (no interactions). */
export const ENCODING_ADDITIVE = 0;
/**
 * All parents are discrete and their joint cell is the input: cell = Σ code_a · Π_{b<a} k_b
 * (mixed radix over the parents in ascending order), encoded as C − 1 indicators for cells
 * 1..C−1 (cell 0 is the reference). This is the saturated model, a conditional table: used for
 * nodes with two or more discrete parents and few cells, so interactions are not lost.
 */
export const ENCODING_JOINT_CELLS = 1;

/** Columns of one row of `mechScalars` (Float64, SCALAR_STRIDE per mechanism). */
export const SCALAR_SIGMA = 0;
export const SCALAR_Y_CENTRE = 1;
export const SCALAR_Y_SCALE = 2;
/** Held-out score used by `auto`: mean squared error (continuous) or mean log-likelihood (discrete); NaN if none. */
export const SCALAR_HELDOUT = 3;
export const SCALAR_STRIDE = 4;

/** Options recorded in the artifact (what `fitModel` was called with, after defaults). */
export interface CompiledModelMeta {
  readonly family: string | Record<string, string>;
  readonly noise: 'gaussian' | 'empirical';
  readonly referenceRows: number;
  readonly seed: number;
  /** Rows of the frame the model was fitted on. */
  readonly nRows: number;
  /** Variables the reference sample was stratified on (their joint cells). */
  readonly stratifiedOn: readonly string[];
  /** 'learned' (a bootstrap graph set) or 'fixed' (one user-given DAG). */
  readonly graphSource: 'learned' | 'fixed';
  readonly notes: readonly string[];
}

/** The compiled model. Plain data: every field is a typed array, a number, or JSON-able. */
export interface CompiledModel {
  readonly formatVersion: number;
  readonly meta: CompiledModelMeta;

  // ---- variables and encoders ----
  /** Number of variables p. */
  readonly p: number;
  readonly names: readonly string[];
  /** KIND_* per variable. */
  readonly kinds: Uint8Array;
  /** Level labels (categorical; binary may carry two labels, else null). */
  readonly levels: readonly (readonly string[] | null)[];
  /** 0 for continuous, 2 for binary, k for categorical. */
  readonly nLevels: Int32Array;
  /** Standardisation of continuous inputs: encoded = (x − centre)/scale; centre 0, scale 1 otherwise. */
  readonly centre: Float64Array;
  readonly scale: Float64Array;

  // ---- graph set ----
  readonly nGraphs: number;
  /** Probability weight per graph (sums to 1). */
  readonly graphWeights: Float64Array;
  /** Bootstrap replicates that produced each graph (1 for a fixed graph). */
  readonly graphCounts: Int32Array;
  /** G × p × p, see the header comment. */
  readonly adjacency: Uint8Array;
  /** G × p topological orders. */
  readonly topoOrder: Int32Array;
  /** G × p mechanism index per node. */
  readonly mechanismOf: Int32Array;
  /** p × p probability of i→j over the bootstrap (for a fixed graph: its 0/1 adjacency). */
  readonly edgeProbability: Float64Array;

  // ---- mechanisms ----
  readonly nMechanisms: number;
  readonly mechTable: Int32Array;
  readonly mechScalars: Float64Array;
  /** Concatenated parent lists (ascending), addressed by MECH_PARENT_OFFSET/COUNT. */
  readonly mechParents: Int32Array;
  readonly mechParams: Float64Array;
  /** Concatenated sorted residuals (empirical noise), addressed by MECH_RESID_OFFSET/COUNT. */
  readonly mechResiduals: Float64Array;

  // ---- reference sample ----
  /** R, the number of reference rows. */
  readonly nReference: number;
  /** Row of the fitting frame each reference row came from. */
  readonly referenceRowIndex: Int32Array;
  /**
   * Survey weight per reference row (sum = R): a row drawn from stratum c with N_c frame rows and
   * n_c sampled rows has weight (N_c/N)/(n_c/R). Weighted means over reference rows are
   * unbiased for frame means; use Σ w·y / Σ w.
   */
  readonly referenceWeights: Float64Array;
  /** p × R observed values (codes for discrete variables), node-major. */
  readonly referenceValues: Float64Array;
  /**
   * M × R abducted noise per mechanism, node-major: continuous nodes e = x − f(pa) (additive);
   * binary/categorical nodes a uniform u in the interval of the inverse-CDF coupling that
   * reproduces the observed value (see noise.ts).
   */
  readonly referenceNoise: Float64Array;
}

/** Kind code of a frame column kind. */
export function kindCode(kind: 'continuous' | 'binary' | 'categorical'): number {
  return kind === 'continuous' ? KIND_CONTINUOUS : kind === 'binary' ? KIND_BINARY : KIND_CATEGORICAL;
}

/** Kind name of a kind code. */
export function kindName(code: number): 'continuous' | 'binary' | 'categorical' {
  return code === KIND_CONTINUOUS ? 'continuous' : code === KIND_BINARY ? 'binary' : 'categorical';
}
