import { gammaQ } from './special-functions.js';

/** Complementary error function, erfc(z) = Q(1/2, z²) for z ≥ 0 (full double accuracy in the tail). */
export function erfc(z: number): number {
  if (Number.isNaN(z)) return NaN;
  if (z >= 0) return gammaQ(0.5, z * z);
  return 2 - gammaQ(0.5, z * z);
}

/** Standard normal cumulative distribution function Φ(x). */
export function normalCdf(x: number): number {
  return 0.5 * erfc(-x / Math.SQRT2);
}

/** Standard normal survival function 1 − Φ(x), accurate for large x. */
export function normalSf(x: number): number {
  return 0.5 * erfc(x / Math.SQRT2);
}

/** Standard normal density φ(x). */
export function normalPdf(x: number): number {
  return Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI);
}

// Rational starting approximation (relative error about 1.15e-9): P. J. Acklam (2003),
// "An algorithm for computing the inverse normal cumulative distribution function"
// (coefficients written from memory of the published algorithm), refined by one Halley step
// on Φ, which brings the result to near double precision.
const A = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
const B = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
const C = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
const D = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
const P_LOW = 0.02425;

/** Standard normal quantile Φ⁻¹(p) for 0 < p < 1 (±Infinity at 0 and 1, NaN outside). */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  let x: number;
  if (p < P_LOW) {
    const q = Math.sqrt(-2 * Math.log(p));
    x = (((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5]) / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1);
  } else if (p <= 1 - P_LOW) {
    const q = p - 0.5;
    const r = q * q;
    x = ((((((A[0] * r + A[1]) * r + A[2]) * r + A[3]) * r + A[4]) * r + A[5]) * q) /
      (((((B[0] * r + B[1]) * r + B[2]) * r + B[3]) * r + B[4]) * r + 1);
  } else {
    const q = Math.sqrt(-2 * Math.log1p(-p));
    x = -(((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5]) / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1);
  }
  // Halley refinement; the error term uses the tail that is computed without cancellation.
  const e = p < 0.5 ? normalCdf(x) - p : (1 - p) - normalSf(x);
  const u = e * Math.sqrt(2 * Math.PI) * Math.exp(0.5 * x * x);
  return x - u / (1 + 0.5 * x * u);
}
