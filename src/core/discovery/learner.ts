import type { Frame } from '../frame/frame.js';
import type { Graph, GraphKind } from '../graph/graph.js';
import type { Rng } from '../random/rng.js';
import type { CompiledKnowledge } from './knowledge.js';

export type LearnerName = 'pc' | 'linear-notears' | 'mlp-notears' | 'direct-lingam' | 'cam' | 'auto';

/** How missing cells were handled before learning. */
export interface MissingReport {
  readonly scheme: string;
  readonly rowsAffected: number;
  readonly cellsAffected: number;
}

/** The plain, serialisable result of one learner run. */
export interface LearnResult {
  readonly learner: Exclude<LearnerName, 'auto'>;
  readonly kind: GraphKind;
  readonly graph: Graph;
  /** Optional edge strengths aligned with graph.adj (for example fitted weights). */
  readonly weights?: Float64Array;
  /** Human-readable notes: why `auto` chose this learner, convergence, thresholds. */
  readonly notes: readonly string[];
  readonly missing: MissingReport;
}

/**
 * Every graph learner has this signature, so learners can be swapped, compared in one
 * benchmark loop, and shipped inside job data. Options are validated once, with defaults.
 */
export interface Learner<O = Record<string, unknown>> {
  readonly name: Exclude<LearnerName, 'auto'>;
  /** Every option with its default: the option names, and the JavaScript type of each value. */
  readonly defaults: Readonly<O>;
  /** Throws (RangeError or TypeError, naming the option) when `learn` would refuse these options. */
  checkOptions(options: Partial<O>): void;
  learn(frame: Frame, knowledge: CompiledKnowledge, options: Partial<O>, rng: Rng): LearnResult;
}
