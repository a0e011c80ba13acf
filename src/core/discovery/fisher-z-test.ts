import type { Frame } from '../frame/frame.js';
import type { Matrix } from '../linalg/matrix.js';
import { correlationMatrix, partialCorrelation } from '../stats/correlation.js';
import { fisherZTest } from '../stats/fisher-z.js';

/**
 * Fisher z test of a zero partial correlation (Fisher 1921, "On the probable error of a
 * coefficient of correlation deduced from a small sample"): under joint Gaussianity
 * z = ½·log((1 + r)/(1 − r))·√(n − |S| − 3) is standard normal when ρ(i, j | S) = 0.
 * The correlation matrix of the frame is computed once; every test is then a partial
 * correlation from it (inverse of the sub-matrix over {i, j} ∪ S).
 */
export interface FisherZTest {
  /** Two-sided p-value of H0: ρ(i, j | cond) = 0. */
  pValue(i: number, j: number, cond: readonly number[]): number;
}

/** A Fisher z tester over the columns of `frame` (values taken as numbers; no missing cells). */
export function createFisherZTest(frame: Frame): FisherZTest {
  const n = frame.nRows;
  const d = frame.columns.length;
  const x: Matrix = { rows: n, cols: d, data: new Float64Array(n * d) };
  for (let j = 0; j < d; j++) {
    const v = frame.columns[j].values;
    for (let r = 0; r < n; r++) x.data[r * d + j] = v[r];
  }
  const corr = correlationMatrix(x);
  return {
    pValue(i, j, cond) {
      let r = partialCorrelation(corr, i, j, cond);
      if (!Number.isFinite(r)) r = 0; // a constant column carries no evidence of dependence
      return fisherZTest(r, n, cond.length);
    },
  };
}
