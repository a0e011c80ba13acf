export * from './graph.js';
export { topologicalOrder, isAcyclic } from './topological-order.js';
export { ancestors, descendants, hasDirectedPath } from './reachability.js';
export { dSeparated } from './d-separation.js';
export { applyMeekRules, meekInPlace } from './meek-rules.js';
export { dagToCpdag, vStructureEdges, countVStructures } from './cpdag.js';
export { enumerateDags, sampleDag, extendToDag, type EnumerateOptions } from './dag-enumeration.js';
export { shd, edgeScores, type EdgeScores } from './scores.js';
