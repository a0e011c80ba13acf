/**
 * OWL-QN: limited-memory quasi-Newton for f(x) + Σ λ_i |x_i| with f smooth
 * (Andrew & Gao 2007, "Scalable training of L1-regularized log-linear models", ICML),
 * built on the L-BFGS two-loop recursion (Nocedal 1980; Liu & Nocedal 1989).
 *
 * Why this and not L-BFGS-B on a positive/negative split: OWL-QN handles the L1 term
 * directly on the d² (or parameter-count) variables instead of 2×, keeps exact zeros, and
 * needs no Cauchy-point machinery. Per-coordinate penalties let one call mix penalised
 * weights (λ_i > 0) and unpenalised ones (λ_i = 0, plain L-BFGS), and a `fixed` mask pins
 * coordinates at their starting value (used for forbidden edges: bounds 0/0).
 *
 * Steps: pseudo-gradient ◇F; direction −H·◇F from the L-BFGS memory, sign-aligned with
 * −◇F; backtracking Armijo search along the orthant projection; memory pairs use the
 * smooth gradient only, and are skipped when sᵀy ≤ 0. Stops like L-BFGS-B's defaults:
 * relative decrease ≤ fTol, or max |◇F| ≤ gradTol.
 */

/** Smooth part: returns f(x) and writes ∇f(x) into `grad`. */
export type SmoothObjective = (x: Float64Array, grad: Float64Array) => number;

export interface OwlqnOptions {
  /** L1 weight per coordinate, or one weight for all. Default 0 (plain L-BFGS). */
  readonly l1?: number | Float64Array;
  /** 1 = coordinate held at its starting value. Default: none. */
  readonly fixed?: Uint8Array;
  /** Number of correction pairs kept. Default 10. */
  readonly memory?: number;
  /** Iteration cap. Default 500. */
  readonly maxIter?: number;
  /** Stop when (F_k − F_{k+1}) / max(|F_k|, |F_{k+1}|, 1) ≤ fTol. Default 2.2e-9 (L-BFGS-B's factr = 1e7). */
  readonly fTol?: number;
  /** Stop when the largest pseudo-gradient entry is ≤ gradTol. Default 1e-5. */
  readonly gradTol?: number;
  /** Backtracking steps before giving up on a direction. Default 40. */
  readonly maxLineSearch?: number;
}

export interface OwlqnResult {
  /** F = f + Σ λ|x| at the returned x. */
  readonly value: number;
  readonly iterations: number;
  readonly evaluations: number;
  readonly converged: boolean;
  readonly reason: 'ftol' | 'gradtol' | 'maxiter' | 'linesearch';
}

/** Minimises f(x) + Σ λ_i|x_i| starting from x, which is overwritten with the solution. */
export function minimiseOwlqn(f: SmoothObjective, x: Float64Array, opts: OwlqnOptions = {}): OwlqnResult {
  const n = x.length;
  const m = opts.memory ?? 10;
  const maxIter = opts.maxIter ?? 500;
  const fTol = opts.fTol ?? 2.2e-9;
  const gradTol = opts.gradTol ?? 1e-5;
  const maxLs = opts.maxLineSearch ?? 40;
  const lam = new Float64Array(n);
  if (typeof opts.l1 === 'number') lam.fill(opts.l1);
  else if (opts.l1) {
    if (opts.l1.length !== n) throw new RangeError(`minimiseOwlqn: l1 has ${opts.l1.length} entries, x has ${n}`);
    lam.set(opts.l1);
  }
  const fixed = opts.fixed ?? new Uint8Array(n);
  if (fixed.length !== n) throw new RangeError(`minimiseOwlqn: fixed has ${fixed.length} entries, x has ${n}`);

  const g = new Float64Array(n);
  const gNew = new Float64Array(n);
  const pg = new Float64Array(n);
  const dir = new Float64Array(n);
  const xNew = new Float64Array(n);
  const orth = new Float64Array(n);
  const S = new Float64Array(m * n);
  const Y = new Float64Array(m * n);
  const rhoM = new Float64Array(m);
  const alpha = new Float64Array(m);
  let head = 0;
  let count = 0;

  let evaluations = 1;
  let fs = f(x, g);
  let F = fs + l1Norm(x, lam);
  let iter = 0;
  let reason: OwlqnResult['reason'] = 'maxiter';

  while (iter < maxIter) {
    const pgMax = pseudoGradient(x, g, lam, fixed, pg);
    if (pgMax <= gradTol) {
      reason = 'gradtol';
      break;
    }
    // Two-loop recursion: dir = −H·pg.
    for (let i = 0; i < n; i++) dir[i] = -pg[i];
    for (let c = 0; c < count; c++) {
      const k = (head - 1 - c + m) % m;
      const off = k * n;
      let a = 0;
      for (let i = 0; i < n; i++) a += S[off + i] * dir[i];
      a *= rhoM[k];
      alpha[k] = a;
      for (let i = 0; i < n; i++) dir[i] -= a * Y[off + i];
    }
    if (count > 0) {
      const k = (head - 1 + m) % m;
      const off = k * n;
      let yy = 0;
      for (let i = 0; i < n; i++) yy += Y[off + i] * Y[off + i];
      const gamma = 1 / (rhoM[k] * yy);
      for (let i = 0; i < n; i++) dir[i] *= gamma;
    }
    for (let c = count - 1; c >= 0; c--) {
      const k = (head - 1 - c + m) % m;
      const off = k * n;
      let b = 0;
      for (let i = 0; i < n; i++) b += Y[off + i] * dir[i];
      b *= rhoM[k];
      const a = alpha[k];
      for (let i = 0; i < n; i++) dir[i] += (a - b) * S[off + i];
    }
    // On penalised coordinates keep only components that descend along −pg and choose the
    // orthant (Andrew & Gao 2007); unpenalised ones move freely, as in plain L-BFGS.
    let dirDotPg = 0;
    for (let i = 0; i < n; i++) {
      if (fixed[i] === 1) dir[i] = 0;
      else if (lam[i] > 0) {
        if (dir[i] * pg[i] >= 0) dir[i] = 0;
        orth[i] = x[i] !== 0 ? Math.sign(x[i]) : -Math.sign(pg[i]);
      }
      dirDotPg += dir[i] * pg[i];
    }
    if (dirDotPg >= 0) {
      // Memory gave no descent: fall back to steepest descent on the pseudo-gradient.
      count = 0;
      dirDotPg = 0;
      for (let i = 0; i < n; i++) {
        dir[i] = fixed[i] === 1 ? 0 : -pg[i];
        dirDotPg += dir[i] * pg[i];
      }
    }
    let step = 1;
    if (count === 0) {
      let dn = 0;
      for (let i = 0; i < n; i++) dn += dir[i] * dir[i];
      step = Math.min(1, 1 / Math.sqrt(dn));
    }
    let Fnew = Infinity;
    let fsNew = Infinity;
    let ok = false;
    for (let ls = 0; ls < maxLs; ls++) {
      let descent = 0;
      for (let i = 0; i < n; i++) {
        let v = x[i] + step * dir[i];
        if (lam[i] > 0 && v * orth[i] <= 0) v = 0;
        xNew[i] = v;
        descent += pg[i] * (v - x[i]);
      }
      evaluations++;
      fsNew = f(xNew, gNew);
      Fnew = fsNew + l1Norm(xNew, lam);
      if (Number.isFinite(Fnew) && Fnew <= F + 1e-4 * descent) {
        ok = true;
        break;
      }
      step *= 0.5;
    }
    iter++;
    if (!ok) {
      if (count > 0) {
        count = 0; // retry once from steepest descent with a fresh memory
        continue;
      }
      reason = 'linesearch';
      break;
    }
    // Store the pair (s, y) on the smooth gradient.
    const off = head * n;
    let sy = 0;
    for (let i = 0; i < n; i++) {
      const s = xNew[i] - x[i];
      const y = gNew[i] - g[i];
      S[off + i] = s;
      Y[off + i] = y;
      sy += s * y;
    }
    if (sy > 1e-16) {
      rhoM[head] = 1 / sy;
      head = (head + 1) % m;
      if (count < m) count++;
    }
    const rel = (F - Fnew) / Math.max(Math.abs(F), Math.abs(Fnew), 1);
    x.set(xNew);
    g.set(gNew);
    fs = fsNew;
    F = Fnew;
    if (rel <= fTol) {
      reason = 'ftol';
      break;
    }
  }
  return { value: F, iterations: iter, evaluations, converged: reason === 'ftol' || reason === 'gradtol', reason };
}

function l1Norm(x: Float64Array, lam: Float64Array): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += lam[i] * Math.abs(x[i]);
  return s;
}

/** Writes the pseudo-gradient of f + Σλ|x| (zero on fixed coordinates); returns its max-abs. */
function pseudoGradient(x: Float64Array, g: Float64Array, lam: Float64Array, fixed: Uint8Array, pg: Float64Array): number {
  let mx = 0;
  for (let i = 0; i < x.length; i++) {
    let v = 0;
    if (fixed[i] === 1) v = 0;
    else if (x[i] > 0) v = g[i] + lam[i];
    else if (x[i] < 0) v = g[i] - lam[i];
    else if (g[i] + lam[i] < 0) v = g[i] + lam[i];
    else if (g[i] - lam[i] > 0) v = g[i] - lam[i];
    pg[i] = v;
    const a = Math.abs(v);
    if (a > mx) mx = a;
  }
  return mx;
}
