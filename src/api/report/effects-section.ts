/**
 * The effect sections of the report: the ATE of each arm against the reference, the uplift
 * table by segment with the recommended arm, and the diagnostics and cautions in plain
 * language. Every number is a field of the service's answer (queries.effect /
 * queries.uplift), only rounded for reading; the one combination made here is the
 * cross-check shown beside an estimate: the weight-average of the per-graph AIPW (or
 * regression-adjustment) estimates over the graphs that have one, the same mix the demo prints.
 */
import type { ReportData, ReportQuestion } from '../../app/reports/report-data.js';
import type { EffectEstimate } from '../../core/effects/ate.js';
import type { UpliftTable } from '../../core/effects/uplift.js';
import { esc, interval, num, pct } from './html.js';
import { barLegend, intervalBar, scaleFor } from './interval-bar.js';

/** Weight-average of the per-graph cross-check estimates (graphs without one are left out); null if none. */
export function crossCheckMix(e: Pick<EffectEstimate, 'perGraph'>): number | null {
  let s = 0;
  let w = 0;
  for (const g of e.perGraph) {
    if (g.crossCheck) {
      s += g.weight * g.crossCheck.estimate;
      w += g.weight;
    }
  }
  return w > 0 ? s / w : null;
}

const refused = (what: string, message: string) => `<p class="refused" role="alert"><strong>${esc(what)} could not be answered:</strong> ${esc(message)}</p>`;

/** The ATE table: one row per arm. */
export function renderEffects(data: ReportData, q: ReportQuestion): string {
  const ok = data.effects.filter((e) => e.answer.ok).map((e) => (e.answer as { ok: true; value: EffectEstimate }).value);
  const values: number[] = [];
  for (const e of ok) values.push(e.lower, e.upper, e.estimate, crossCheckMix(e) ?? NaN);
  const scale = scaleFor(values);
  const level = ok[0]?.level ?? 0.9;
  const rows = data.effects.map(({ arm, answer }) => {
    if (!answer.ok) return `<tr data-arm="${esc(arm)}"><th scope="row">${esc(arm)}</th><td colspan="3">${refused(`The effect of “${arm}”`, answer.error)}</td></tr>`;
    const e = answer.value;
    const xc = crossCheckMix(e);
    return (
      `<tr data-arm="${esc(arm)}"><th scope="row">${esc(arm)}</th>` +
      `<td class="num">${interval(e)}</td>` +
      `<td class="num">${xc === null ? 'n/a' : num(xc)}</td>` +
      `<td>${intervalBar(e, scale, xc, `Effect of ${arm} against ${String(q.reference)}`)}</td></tr>`
    );
  });
  return (
    `<section id="effects" aria-labelledby="effects-h"><h2 id="effects-h">Average effect of each arm on ${esc(q.outcome)}</h2>` +
    `<p>Each row: mean of <em>${esc(q.outcome)}</em> if everyone got the arm, minus if everyone got the reference “${esc(String(q.reference))}” ` +
    `(estimate with its ${pct(level)} interval), and the AIPW cross-check that does not use the fitted mechanisms.</p>` +
    barLegend() +
    `<div class="scroll"><table class="effects"><thead><tr><th scope="col">Arm</th><th scope="col">Effect [interval]</th><th scope="col">Cross-check</th><th scope="col">Interval bar</th></tr></thead>` +
    `<tbody>${rows.join('')}</tbody></table></div></section>`
  );
}

/** The uplift table by segment. */
export function renderUplift(data: ReportData, q: ReportQuestion): string {
  const head = `<section id="uplift" aria-labelledby="uplift-h"><h2 id="uplift-h">Uplift by segment${q.by.length ? ` (${esc(q.by.join(' × '))})` : ''}</h2>`;
  if (!data.uplift) return `${head}<p>${esc(data.upliftNote ?? 'No uplift table.')}</p></section>`;
  if (!data.uplift.ok) return `${head}${refused('The uplift table', data.uplift.error)}</section>`;
  const t: UpliftTable = data.uplift.value;
  const values: number[] = [];
  for (const r of t.rows) for (const e of r.effects) values.push(e.lower, e.upper, e.estimate, crossCheckMix(e) ?? NaN);
  const scale = scaleFor(values);
  const costs = q.costs && q.costs.length > 0;
  const armHeads = t.arms.map((a) => `<th scope="col">${esc(a)} − ${esc(t.reference)}</th>`).join('');
  const rows = t.rows.map((r) => {
    const cells = r.effects.map((e, k) => {
      const xc = crossCheckMix(e);
      const isRec = t.arms[k] === r.recommended;
      return (
        `<td class="${isRec ? 'rec' : ''}"><span class="num">${interval(e)}</span>` +
        `<span class="xcnum">cross-check ${xc === null ? 'n/a' : num(xc)}</span>` +
        (costs ? `<span class="xcnum">net value ${num(r.netValues[k])}</span>` : '') +
        `${intervalBar(e, scale, xc, `${r.segment.name}: ${t.arms[k]} against ${t.reference}`)}${isRec ? '<span class="badge">★ recommended</span>' : ''}</td>`
      );
    });
    return (
      `<tr data-segment="${esc(r.segment.name)}" data-recommended="${esc(r.recommended)}"><th scope="row">${esc(r.segment.name)}<br><span class="rows">${r.segment.rows} rows</span></th>` +
      `${cells.join('')}<td class="recommended"><strong>${esc(r.recommended)}</strong>${r.recommended === t.reference ? ' (reference: no arm is better)' : ''}</td></tr>`
    );
  });
  const better = t.better === 'lower' ? 'lower' : 'higher';
  const rule = costs
    ? `The recommended arm has the largest value: ${better === 'lower' ? 'the fall' : 'the rise'} in ${esc(t.outcome)} minus its extra cost per unit (costs ${esc(q.costs!.join(', '))} for ${esc(t.arms.join(', '))}); the reference when no arm’s value is positive.`
    : `The recommended arm is the one that moves ${esc(t.outcome)} most in the better direction (${better} is better); the reference when no arm improves on it.`;
  const treatAll = t.treatAll.map((a) => `<li>Everyone on <strong>${esc(a.arm)}</strong>: ${interval(a)}</li>`).join('');
  return (
    head +
    `<p>${rule}</p>` +
    barLegend() +
    `<div class="scroll"><table class="uplift"><thead><tr><th scope="col">Segment</th>${armHeads}<th scope="col">Recommended</th></tr></thead><tbody>${rows.join('')}</tbody></table></div>` +
    `<h3>Value per unit of acting on this table</h3><ul class="policy"><li>Each segment on its recommended arm: <strong>${interval(t.policyValue)}</strong></li>${treatAll}` +
    `<li>Gain of the per-segment policy over the best single arm: ${num(t.gainOverBestSingleArm)}</li></ul>` +
    (t.cautions.length ? `<ul class="cautions">${t.cautions.map((c) => `<li>${esc(c)}</li>`).join('')}</ul>` : '') +
    '</section>'
  );
}

/** Sum of the weights of the listed graphs, from an estimate's per-graph breakdown. */
function weightOf(e: EffectEstimate, graphs: readonly number[]): number {
  let w = 0;
  for (const g of e.perGraph) if (graphs.includes(g.graph)) w += g.weight;
  return w;
}

/** Diagnostics and cautions of each arm's estimate, in words. */
export function renderDiagnostics(data: ReportData, q: ReportQuestion): string {
  const items: string[] = [];
  for (const { arm, answer } of data.effects) {
    if (!answer.ok) continue;
    const e = answer.value;
    const lines: string[] = [];
    lines.push(
      e.pathProbability >= 0.999
        ? `Every graph in the set has a directed path from ${esc(q.treatment)} to ${esc(q.outcome)}.`
        : `Graphs carrying ${pct(e.pathProbability)} of the weight have a directed path from ${esc(q.treatment)} to ${esc(q.outcome)}; in the rest this effect is exactly zero.`,
    );
    lines.push(`${pct(e.graphShare)} of the estimate’s spread comes from uncertainty about the graph; the rest from sampling and simulation error.`);
    if (e.positivityFlags.length === 0) lines.push('No arm was flagged for limited support (comparable units exist under each arm).');
    for (const f of e.positivityFlags) {
      lines.push(`<strong>Limited support:</strong> few units resemble those that would get “${esc(f.arm)}” in graph(s) ${esc(f.graphs.join(', '))} (weight ${pct(weightOf(e, f.graphs))}); the estimate leans on extrapolation there.`);
    }
    if (e.disagreements.length === 0) lines.push('The cross-check agrees with the simulation in every graph.');
    else lines.push(`<strong>Disagreement:</strong> in graph(s) ${esc(e.disagreements.join(', '))} (weight ${pct(weightOf(e, e.disagreements))}) the cross-check’s interval does not overlap the simulation’s; the fitted mechanisms may be misspecified.`);
    items.push(
      `<div class="diag" data-arm="${esc(arm)}"><h3>${esc(arm)} against ${esc(String(q.reference))}</h3><ul>${lines.map((l) => `<li>${l}</li>`).join('')}</ul>` +
        (e.cautions.length ? `<p class="caution-h">Cautions</p><ul class="cautions">${e.cautions.map((c) => `<li>${esc(c)}</li>`).join('')}</ul>` : '') +
        '</div>',
    );
  }
  return `<section id="diagnostics" aria-labelledby="diag-h"><h2 id="diag-h">Before acting: diagnostics and cautions</h2>${items.join('') || '<p>No estimate to diagnose.</p>'}</section>`;
}
