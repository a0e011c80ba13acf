import type { Rng } from '../random/rng.js';

/**
 * Distance correlation of two samples and its permutation test (Székely, Rizzo & Bakirov 2007,
 * "Measuring and testing dependence by correlation of distances", Ann. Statist. 35(6)).
 * dCor is zero in the population exactly when x and y are independent, whatever the form of the
 * dependence, so a test on it finds nonlinear as well as linear association. O(n²) time and
 * memory: meant for diagnostics on up to a few thousand rows, not for inner loops.
 */

/** The double-centred distance matrix of x (n × n, row-major): a_ij − ā_i· − ā_·j + ā··. */
function centredDistances(x: Float64Array): Float64Array {
  const n = x.length;
  const a = new Float64Array(n * n);
  const rowMean = new Float64Array(n);
  let all = 0;
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) {
      const v = Math.abs(x[i] - x[j]);
      a[i * n + j] = v;
      s += v;
    }
    rowMean[i] = s / n;
    all += s;
  }
  all /= n * n;
  // Symmetric, so the column means equal the row means.
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) a[i * n + j] += all - rowMean[i] - rowMean[j];
  return a;
}

/** Mean of A_ij·B_π(i)π(j): the squared distance covariance of x and y permuted by π (identity when absent). */
function crossMean(a: Float64Array, b: Float64Array, n: number, perm?: Int32Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    const pi = (perm ? perm[i] : i) * n;
    if (perm) for (let j = 0; j < n; j++) s += a[ri + j] * b[pi + perm[j]];
    else for (let j = 0; j < n; j++) s += a[ri + j] * b[ri + j];
  }
  return s / (n * n);
}

/** Sample distance correlation dCor_n(x, y) in [0, 1] (their Definition 4); 0 when either sample is constant. */
export function distanceCorrelation(x: Float64Array, y: Float64Array): number {
  if (x.length !== y.length) throw new RangeError(`distanceCorrelation: samples of ${x.length} and ${y.length} values`);
  const n = x.length;
  const a = centredDistances(x);
  const b = centredDistances(y);
  const vx = crossMean(a, a, n);
  const vy = crossMean(b, b, n);
  if (!(vx > 0 && vy > 0)) return 0;
  return Math.sqrt(Math.max(0, crossMean(a, b, n)) / Math.sqrt(vx * vy));
}

/**
 * Permutation test of independence on dCor: the p-value (1 + #{permuted ≥ observed}) / (1 +
 * permutations), which is exact in finite samples under independence (the permuted statistics
 * are exchangeable with the observed one). Its smallest value is 1 / (1 + permutations).
 */
export function distanceCorrelationTest(x: Float64Array, y: Float64Array, permutations: number, rng: Rng): { dcor: number; p: number } {
  if (x.length !== y.length) throw new RangeError(`distanceCorrelationTest: samples of ${x.length} and ${y.length} values`);
  if (!Number.isInteger(permutations) || permutations < 1) throw new RangeError(`distanceCorrelationTest: permutations must be a whole number ≥ 1, got ${permutations}`);
  const n = x.length;
  const a = centredDistances(x);
  const b = centredDistances(y);
  const vx = crossMean(a, a, n);
  const vy = crossMean(b, b, n);
  if (!(vx > 0 && vy > 0)) return { dcor: 0, p: 1 };
  const observed = crossMean(a, b, n);
  const perm = new Int32Array(n);
  for (let i = 0; i < n; i++) perm[i] = i;
  let atLeast = 0;
  for (let k = 0; k < permutations; k++) {
    rng.shuffle(perm);
    if (crossMean(a, b, n, perm) >= observed) atLeast++;
  }
  return { dcor: Math.sqrt(Math.max(0, observed) / Math.sqrt(vx * vy)), p: (1 + atLeast) / (1 + permutations) };
}
