/**
 * Prediction of a fitted mechanism on row-major encoded inputs (used while fitting; the
 * simulator has its own column-wise kernel over the compiled parameter arrays).
 */
import type { Matrix } from '../linalg/matrix.js';
import { tanhApprox } from './activation.js';
import type { FittedMechanism } from './types.js';

/** sigmoid(t) without overflow. */
export function sigmoid(t: number): number {
  if (t >= 0) return 1 / (1 + Math.exp(-t));
  const e = Math.exp(t);
  return e / (1 + e);
}

/**
 * Predict into `out`: continuous → conditional mean (length n); binary → P(x = 1) (length n);
 * categorical → class probabilities, row-major n × k.
 */
export function predictMechanism(m: FittedMechanism, x: Matrix, out?: Float64Array): Float64Array {
  const n = x.rows;
  const p = m.nIn;
  if (x.cols !== p) throw new RangeError(`predictMechanism: inputs have ${x.cols} columns, mechanism expects ${p}`);
  const o = out ?? new Float64Array(n * m.nOut);
  const xd = x.data;
  const w = m.params;
  if (m.family === 'linear' || m.family === 'logistic') {
    for (let r = 0; r < n; r++) {
      let s = w[0];
      for (let j = 0; j < p; j++) s += w[1 + j] * xd[r * p + j];
      o[r] = m.family === 'linear' ? m.yCentre + m.yScale * s : sigmoid(s);
    }
  } else if (m.family === 'softmax') {
    const k = m.nOut;
    for (let r = 0; r < n; r++) {
      let mx = -Infinity;
      for (let c = 0; c < k; c++) {
        const base = c * (p + 1);
        let s = w[base];
        for (let j = 0; j < p; j++) s += w[base + 1 + j] * xd[r * p + j];
        o[r * k + c] = s;
        if (s > mx) mx = s;
      }
      let z = 0;
      for (let c = 0; c < k; c++) {
        const e = Math.exp(o[r * k + c] - mx);
        o[r * k + c] = e;
        z += e;
      }
      for (let c = 0; c < k; c++) o[r * k + c] /= z;
    }
  } else {
    const h = m.hidden;
    const b1 = h * p;
    const w2 = b1 + h;
    const b2 = w2 + h;
    const lin = b2 + 1;
    for (let r = 0; r < n; r++) {
      let l = w[lin];
      for (let j = 0; j < p; j++) l += w[lin + 1 + j] * xd[r * p + j];
      let s = w[b2];
      for (let u = 0; u < h; u++) {
        let a = w[b1 + u];
        for (let j = 0; j < p; j++) a += w[u * p + j] * xd[r * p + j];
        s += w[w2 + u] * tanhApprox(a);
      }
      o[r] = m.family === 'mlp' ? l + (m.yCentre + m.yScale * s) : sigmoid(l + s);
    }
  }
  return o;
}
