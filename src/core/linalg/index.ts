export * from './matrix.js';
export { matmul, transpose, gram, matvec } from './matmul.js';
export { cholesky, choleskySolve, solveSpd } from './cholesky.js';
export { luFactor, luSolveMatrix, type LuFactor } from './lu.js';
export { inverse, inverseSpd } from './inverse.js';
export { lstsq, type LstsqOptions, type LstsqResult } from './lstsq.js';
export { expm } from './expm.js';
export { logdet, slogdet } from './logdet.js';
