/**
 * Plain-language cautions attached to every estimate: the assumptions it rests on, and what
 * the diagnostics of this particular query say.
 */
import type { GraphBreakdown } from './contrast.js';

/** Always stated. */
export const STANDING_CAUTIONS: readonly string[] = [
  'This estimate assumes the causal graphs considered include the true one and that no unmeasured variable influences both the treatment and the outcome (no hidden confounding).',
  'Each variable is modelled by a fitted mechanism (linear or small neural network with additive noise; logistic or softmax for discrete variables); effects far outside the range of the data are extrapolations.',
  'It is an estimate from observational data: it does not replace a randomised trial, professional judgement or applicable regulation.',
];

/** Cautions from the diagnostics of one estimate. */
export function queryCautions(
  treatment: string,
  outcome: string,
  pathProbability: number,
  graphShare: number,
  perGraph: readonly GraphBreakdown[],
  crossChecked: boolean,
): string[] {
  const out = STANDING_CAUTIONS.slice();
  if (pathProbability < 1) {
    const pct = Math.round((1 - pathProbability) * 100);
    out.push(`In ${pct}% of the graph weight there is no directed path from "${treatment}" to "${outcome}"; in those graphs the effect is zero, which pulls the estimate toward zero.`);
  }
  if (graphShare > 0.5) out.push('Most of the uncertainty comes from not knowing which graph is right; more data or background knowledge about edge directions would narrow it.');
  const flagged = new Map<string, number[]>();
  for (const g of perGraph) {
    for (const o of g.positivity ?? []) {
      if (!o.limitedSupport) continue;
      const list = flagged.get(o.arm) ?? [];
      list.push(g.graph);
      flagged.set(o.arm, list);
    }
  }
  for (const [arm, graphs] of flagged) {
    out.push(`Arm "${arm}" has little support in the data for some units (graphs ${graphs.join(', ')}): many units almost never or almost always receive it given the adjustment variables, so the estimate for it leans on extrapolation.`);
  }
  const disagree = perGraph.filter((g) => g.crossCheck?.disagrees && g.causalPath).map((g) => g.graph);
  if (disagree.length > 0) {
    out.push(`In graph(s) ${disagree.join(', ')} the simulation and the cross-check estimator disagree beyond their intervals; the fitted mechanisms may be misspecified for this question.`);
  }
  const missing = perGraph.filter((g) => g.crossCheck?.disagrees && !g.causalPath).map((g) => g.graph);
  if (missing.length > 0) {
    out.push(
      `Graph(s) ${missing.join(', ')} have no directed path from "${treatment}" to "${outcome}", yet the cross-check adjusted for the treatment's parents there finds an effect: the data may hold an edge these graphs leave out. The interval is widened by the gap; background knowledge or more data about that edge would settle it.`,
    );
  }
  if (!crossChecked) {
    out.push('No cross-check was available, so the interval reflects graph uncertainty and Monte Carlo error only, not the estimation error of the fitted mechanisms.');
  }
  return out;
}
