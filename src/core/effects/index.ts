/** Effect queries on a compiled model: ATE/CATE, uplift tables, segments, arms, the per-model cache. */
export { type Arm, armLabel, resolveArm } from './arms.js';
export { estimateEffect, INTERVAL_METHOD, type EffectEstimate, type EffectQuery } from './ate.js';
export { STANDING_CAUTIONS } from './cautions.js';
export type { ContrastSummary, CrossCheckEstimate, GraphBreakdown } from './contrast.js';
export { EffectCache, type UnitOutcomes } from './effect-cache.js';
export { mixtureInterval, type MixtureSummary } from './interval.js';
export { expandSegments, resolveSegment, SegmentError, type Segment, type SegmentBy } from './segments.js';
export { upliftTable, type UpliftQuery, type UpliftRow, type UpliftTable, type ValueInterval } from './uplift.js';
export {
  whatIf,
  DEFAULT_WHATIF_DRAWS,
  MAX_POSTED_ROWS,
  MAX_WHATIF_UNITS,
  MIN_GRAPH_DRAWS,
  WHATIF_METHOD,
  type WhatIfEffect,
  type WhatIfGraphPart,
  type WhatIfPrediction,
  type WhatIfQuery,
  type WhatIfResult,
  type WhatIfSummary,
  type WhatIfUnit,
} from './what-if.js';
