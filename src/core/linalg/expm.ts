import { type Matrix, zeros } from './matrix.js';
import { matmul } from './matmul.js';
import { luFactor, luSolveMatrix } from './lu.js';

// Scaling and squaring with diagonal Padé approximants of degree m ∈ {3, 5, 7, 9, 13}:
// Higham, N. J. (2005), "The scaling and squaring method for the matrix exponential
// revisited", SIAM J. Matrix Anal. Appl. 26(4), 1179–1193 (Algorithm 2.3; θ_m from Table 2.3).
const THETA = [1.495585217958292e-2, 2.539398330063230e-1, 9.504178996162932e-1, 2.097847961257068e0, 5.371920351148152e0];
const PADE: readonly (readonly number[])[] = [
  [120, 60, 12, 1],
  [30240, 15120, 3360, 420, 30, 1],
  [17297280, 8648640, 1995840, 277200, 25200, 1512, 56, 1],
  [17643225600, 8821612800, 2075673600, 302702400, 30270240, 2162160, 110880, 3960, 90, 1],
  [
    64764752532480000, 32382376266240000, 7771770303897600, 1187353796428800, 129060195264000, 10559470521600,
    670442572800, 33522128640, 1323241920, 40840800, 960960, 16380, 182, 1,
  ],
];

function norm1(a: Matrix): number {
  const n = a.rows;
  let best = 0;
  for (let j = 0; j < n; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += Math.abs(a.data[i * n + j]);
    if (s > best) best = s;
  }
  return best;
}

/**
 * Matrix exponential e^A of a square matrix (Higham 2005 scaling and squaring, Padé 13 with
 * the lower degrees chosen when ‖A‖₁ is small). Throws RangeError if A is not square or the
 * Padé denominator is singular (only for non-finite input).
 */
export function expm(a: Matrix): Matrix {
  const n = a.rows;
  if (a.cols !== n) throw new RangeError(`expm: matrix is ${a.rows}×${a.cols}, not square`);
  if (n === 0) return zeros(0, 0);
  const nrm = norm1(a);
  if (!Number.isFinite(nrm)) throw new RangeError('expm: matrix has non-finite entries');

  const nn = n * n;
  const a2 = matmul(a, a);
  const u = zeros(n, n);
  const v = zeros(n, n);
  const tmp = zeros(n, n);
  let s = 0;
  let m = -1;
  for (let k = 0; k < 4; k++) {
    if (nrm <= THETA[k]) {
      m = k;
      break;
    }
  }

  if (m >= 0) {
    // Degree 3..9: U = A·Σ_odd b_k A^{k-1}, V = Σ_even b_k A^k with powers A², A⁴, …
    const b = PADE[m];
    const deg = b.length - 1;
    const ud = tmp.data;
    const vd = v.data;
    for (let i = 0; i < n; i++) {
      ud[i * n + i] = b[1];
      vd[i * n + i] = b[0];
    }
    let pow = a2;
    for (let k = 2; k <= deg; k += 2) {
      const pd = pow.data;
      const bu = b[k + 1];
      const bv = b[k];
      for (let t = 0; t < nn; t++) {
        ud[t] += bu * pd[t];
        vd[t] += bv * pd[t];
      }
      if (k + 2 <= deg) pow = matmul(pow, a2);
    }
    matmul(a, tmp, u);
  } else {
    s = Math.max(0, Math.ceil(Math.log2(nrm / THETA[4])));
    const scale = Math.pow(2, -s);
    const as: Matrix = { rows: n, cols: n, data: new Float64Array(nn) };
    for (let t = 0; t < nn; t++) as.data[t] = a.data[t] * scale;
    const s2 = scale * scale;
    const b2: Matrix = { rows: n, cols: n, data: new Float64Array(nn) };
    for (let t = 0; t < nn; t++) b2.data[t] = a2.data[t] * s2;
    const b4 = matmul(b2, b2);
    const b6 = matmul(b4, b2);
    const b = PADE[4];
    const d2 = b2.data;
    const d4 = b4.data;
    const d6 = b6.data;
    const td = tmp.data;
    // U = A[A6(b13 A6 + b11 A4 + b9 A2) + b7 A6 + b5 A4 + b3 A2 + b1 I]
    for (let t = 0; t < nn; t++) td[t] = b[13] * d6[t] + b[11] * d4[t] + b[9] * d2[t];
    const inner = matmul(b6, tmp);
    const id = inner.data;
    for (let t = 0; t < nn; t++) id[t] += b[7] * d6[t] + b[5] * d4[t] + b[3] * d2[t];
    for (let i = 0; i < n; i++) id[i * n + i] += b[1];
    matmul(as, inner, u);
    // V = A6(b12 A6 + b10 A4 + b8 A2) + b6 A6 + b4 A4 + b2 A2 + b0 I
    for (let t = 0; t < nn; t++) td[t] = b[12] * d6[t] + b[10] * d4[t] + b[8] * d2[t];
    matmul(b6, tmp, v);
    const vd = v.data;
    for (let t = 0; t < nn; t++) vd[t] += b[6] * d6[t] + b[4] * d4[t] + b[2] * d2[t];
    for (let i = 0; i < n; i++) vd[i * n + i] += b[0];
  }

  // R = (V − U)⁻¹(V + U)
  const ud = u.data;
  const vd = v.data;
  const den = zeros(n, n);
  const num = zeros(n, n);
  for (let t = 0; t < nn; t++) {
    den.data[t] = vd[t] - ud[t];
    num.data[t] = vd[t] + ud[t];
  }
  const f = luFactor(den);
  if (f.singular) throw new RangeError('expm: Padé denominator is singular');
  let r = luSolveMatrix(f, num);
  let spare = tmp;
  for (let k = 0; k < s; k++) {
    const next = matmul(r, r, spare);
    spare = r;
    r = next;
  }
  return r;
}
