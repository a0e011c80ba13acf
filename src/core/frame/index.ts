export * from './frame.js';
export { standardise, applyStandardise, unstandardise, type ColumnScale, type StandardiseParams } from './standardise.js';
export { oneHot, decodeOneHot, type OneHotBlock, type OneHotLayout, type OneHotOptions } from './one-hot.js';
export { continuousMatrix } from './continuous-matrix.js';
export { imputeMissing, countMissing, type ImputeScheme } from './impute.js';
export { missingMask, rowMissingMask } from './missing-mask.js';
