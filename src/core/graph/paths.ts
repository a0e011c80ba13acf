// Path queries under one import for callers that want reachability and d-separation together
// (the adjustment-set code imports them from here).
export { ancestors, descendants, hasDirectedPath } from './reachability.js';
export { dSeparated } from './d-separation.js';
