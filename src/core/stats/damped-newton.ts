/**
 * The step the softmax-regression Newton fit takes once the direction is known: halve the
 * step until the penalised log-likelihood does not fall (backtracking), move the parameters,
 * and report whether the fit has converged. (Logistic regression fuses its line search with
 * its passes over the rows, see logistic-regression.ts.)
 */
export function dampedNewtonStep(
  theta: Float64Array,
  step: Float64Array,
  trial: Float64Array,
  obj: number,
  objective: (x: Float64Array) => number,
  tol: number,
): { obj: number; converged: boolean } {
  const dim = theta.length;
  let t = 1;
  let next = obj;
  for (let half = 0; half < 30; half++) {
    for (let j = 0; j < dim; j++) trial[j] = theta[j] + t * step[j];
    next = objective(trial);
    if (next >= obj - 1e-12 * Math.abs(obj)) break;
    t *= 0.5;
  }
  let maxStep = 0;
  for (let j = 0; j < dim; j++) {
    maxStep = Math.max(maxStep, Math.abs(trial[j] - theta[j]));
    theta[j] = trial[j];
  }
  const gain = next - obj;
  const converged = maxStep < tol || (gain >= 0 && gain < 1e-14 * (1 + Math.abs(next)) && maxStep < 1e-6);
  return { obj: next, converged };
}
