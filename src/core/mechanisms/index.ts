/** Fitted mechanisms: one interface for every family (fit → plain data; predict into a buffer). */
export * from './types.js';
export { fitMechanism, split } from './fit.js';
export { predictMechanism, sigmoid } from './predict.js';
export { encodeInputs, encodedWidth, type EncodingSpec } from './encode.js';
export { MechanismCache, mechanismKey } from './cache.js';
