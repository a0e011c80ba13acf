/**
 * The two estimates an analyst without a causal graph would report, computed straight from
 * the generated table, for the demo to print beside Fulcrum's answers:
 *  - the raw difference in mean outcome between households on an arm and on `none`;
 *  - "regress the outcome on the treatment and everything else": the arm's coefficient in
 *    a least-squares fit on every other column (categorical columns one-hot), which adjusts
 *    for the mediators and the collider and so answers a different question.
 * Both are computed within a segment too (rows of that segment only).
 */
import { lstsq } from '../core/linalg/lstsq.js';
import type { Matrix } from '../core/linalg/matrix.js';
import { PROGRAMMES, SCENARIO_COLUMNS, type ScenarioTable } from './scenario.js';

export interface NaiveEstimates {
  differenceInMeans: number;
  regressionOnAll: number;
}

type Row = (i: number) => boolean;

function meanWhere(y: Float64Array, keep: Row): number {
  let s = 0;
  let c = 0;
  for (let i = 0; i < y.length; i++) if (keep(i)) (s += y[i]), c++;
  return c > 0 ? s / c : NaN;
}

/** Naive estimates of `arm` against `none` on winter_kwh, over the rows `keep` selects. */
export function naiveEstimates(t: ScenarioTable, arm: string, keep: Row = () => true): NaiveEstimates {
  const y = t.winter_kwh;
  const differenceInMeans = meanWhere(y, (i) => keep(i) && t.programme[i] === arm) - meanWhere(y, (i) => keep(i) && t.programme[i] === 'none');
  // Design: programme dummies first (reference none), then every other column.
  const rows: number[] = [];
  for (let i = 0; i < y.length; i++) if (keep(i)) rows.push(i);
  const columns: Array<(i: number) => number> = PROGRAMMES.slice(1).map((p) => (i: number) => (t.programme[i] === p ? 1 : 0));
  const table = t as unknown as Record<string, ArrayLike<string | number>>;
  for (const name of SCENARIO_COLUMNS) {
    if (name === 'programme' || name === 'winter_kwh') continue;
    const col = table[name];
    if (typeof col[0] === 'string') {
      const levels = [...new Set(Array.from(col as ArrayLike<string>))].sort();
      for (const lv of levels.slice(1)) columns.push((i) => (col[i] === lv ? 1 : 0));
    } else columns.push((i) => col[i] as number);
  }
  const p = columns.length;
  const x: Matrix = { rows: rows.length, cols: p, data: new Float64Array(rows.length * p) };
  const yy = new Float64Array(rows.length);
  rows.forEach((i, r) => {
    for (let c = 0; c < p; c++) x.data[r * p + c] = columns[c](i);
    yy[r] = y[i];
  });
  // Constant dummies inside a small segment make X rank-deficient; a whisper of ridge keeps it solvable.
  const fit = lstsq(x, yy, { ridge: 1e-6 });
  const regressionOnAll = fit.coef[PROGRAMMES.indexOf(arm as (typeof PROGRAMMES)[number]) - 1];
  return { differenceInMeans, regressionOnAll };
}
