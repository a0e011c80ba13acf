/**
 * The hidden-layer activation of the MLP mechanisms: a rational approximation of tanh, the
 * Padé [7/6] approximant x(135135 + 17325x² + 378x⁴ + x⁶)/(135135 + 62370x² + 3150x⁴ + 28x⁶),
 * clamped to ±1 beyond |x| = 4.97. It is odd, monotone and within 1e-4 of tanh everywhere,
 * and costs a third of Math.tanh in the simulation kernels. The same function is used to train,
 * predict and simulate, so the fitted network is exactly the simulated one. Training uses
 * 1 − a² as its derivative (exact for tanh; within about 1e-4 here).
 */
export function tanhApprox(x: number): number {
  if (x > 4.97) return 1;
  if (x < -4.97) return -1;
  const x2 = x * x;
  return (x * (135135 + x2 * (17325 + x2 * (378 + x2)))) / (135135 + x2 * (62370 + x2 * (3150 + 28 * x2)));
}
