/**
 * Positivity (overlap) diagnostics from fitted propensities: for each arm, how many units have
 * almost no chance (< 0.05) or almost certainty (> 0.95) of receiving it given the adjustment
 * set. The 0.05/0.95 bounds and the 10% flag threshold are common practice (compare the
 * [0.1, 0.9] rule of Crump, Hotz, Imbens & Mitnik 2009), not a theorem.
 */

/** Propensity below which a unit is said to have too little support for an arm. */
export const LOW_PROPENSITY = 0.05;
/** Propensity above which the other arms lack support for a unit. */
export const HIGH_PROPENSITY = 0.95;
/** Share of units outside [LOW, HIGH] above which an arm is flagged. Common practice. */
export const FLAG_SHARE = 0.1;

/** Overlap of one arm. */
export interface ArmOverlap {
  readonly arm: string;
  /** Units observed in this arm. */
  readonly count: number;
  /** Share of units with propensity for this arm below 0.05. */
  readonly shareLow: number;
  /** Share of units with propensity for this arm above 0.95. */
  readonly shareHigh: number;
  readonly minPropensity: number;
  readonly maxPropensity: number;
  /** True when shareLow + shareHigh exceeds 10% or the arm has fewer than 10 units. */
  readonly limitedSupport: boolean;
}

/**
 * Overlap per listed arm from an n × k propensity matrix (row-major) and observed codes.
 * `arms` are codes; `labels` name every code.
 */
export function armOverlap(
  prop: Float64Array,
  codes: Int32Array,
  k: number,
  arms: readonly number[],
  labels: readonly string[],
): ArmOverlap[] {
  const n = codes.length;
  const out: ArmOverlap[] = [];
  for (const c of arms) {
    let low = 0;
    let high = 0;
    let count = 0;
    let mn = Infinity;
    let mx = -Infinity;
    for (let r = 0; r < n; r++) {
      const e = prop[r * k + c];
      if (e < LOW_PROPENSITY) low++;
      if (e > HIGH_PROPENSITY) high++;
      if (e < mn) mn = e;
      if (e > mx) mx = e;
      if (codes[r] === c) count++;
    }
    const shareLow = n === 0 ? 0 : low / n;
    const shareHigh = n === 0 ? 0 : high / n;
    out.push({
      arm: labels[c],
      count,
      shareLow,
      shareHigh,
      minPropensity: mn,
      maxPropensity: mx,
      limitedSupport: shareLow + shareHigh > FLAG_SHARE || count < 10,
    });
  }
  return out;
}
