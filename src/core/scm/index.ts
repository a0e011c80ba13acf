/** The structural causal model layer: compile, serialise, simulate. */
export * from './compiled-model.js';
export * from './intervention.js';
export { QueryRefusalError } from './query-refusal.js';
export { fitModel, fitFixedGraph, type FitModelOptions, type GraphSetInput } from './fit-model.js';
export { serialise, deserialise, ModelFormatError } from './serialise.js';
export {
  sample,
  sampleNoise,
  simulateIntervention,
  counterfactualOutcomes,
  interventionalOutcomes,
  type SimulationBatch,
  type OutcomeOptions,
  type Units,
} from './simulate.js';
export {
  variableIndex,
  graphAt,
  parentsIn,
  descendantMask,
  ancestorMask,
  hasDirectedPathIn,
  pathProbability,
} from './model-access.js';
export { stratifiedReferenceSample, type ReferenceSample } from './reference-sample.js';
