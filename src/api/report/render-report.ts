/**
 * The report page: one self-contained HTML document (inline CSS and SVG, no script, no
 * external request) built from a ReportData gathered through the API's own service calls.
 * A pure function: the same data gives the same page.
 */
import type { ReportData } from '../../app/reports/report-data.js';
import { renderDiagnostics, renderEffects, renderUplift } from './effects-section.js';
import { renderGraphSvg } from './graph-svg.js';
import { esc, pct } from './html.js';
import { renderProvenance } from './provenance-section.js';
import { REPORT_CSS } from './report-styles.js';

/** Render the report page for `data`. */
export function renderReport(data: ReportData): string {
  const q = data.question;
  const v = data.version;
  const title = `${data.model.name} — version ${v.number}`;
  const sections: string[] = [];
  sections.push(renderQuestion(data));
  sections.push(renderGraph(data));
  if (q) {
    sections.push(renderEffects(data, q), renderUplift(data, q), renderDiagnostics(data, q));
  }
  sections.push(renderProvenance(data));
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="robots" content="noindex, nofollow">
<meta name="referrer" content="no-referrer">
<title>${esc(title)} · Fulcrum report</title>
<style>${REPORT_CSS}</style>
</head>
<body>
<main>
<header class="top">
<h1>${esc(title)}</h1>
<p class="meta">Fulcrum model report · fitted ${esc(v.createdAt)}${data.linkExpiresAt ? ` · this read-only link expires ${esc(data.linkExpiresAt)}` : ''}</p>
<nav class="toc" aria-label="Sections"><ul><li><a href="#question">Question</a></li><li><a href="#graph">Graph</a></li>${
    q ? '<li><a href="#effects">Effects</a></li><li><a href="#uplift">Uplift</a></li><li><a href="#diagnostics">Diagnostics</a></li>' : ''
  }<li><a href="#provenance">Provenance</a></li></ul></nav>
</header>
${sections.join('\n')}
<footer><p>Every number on this page is the service’s own answer for this version (the same calls as the effect and version routes of the API), rounded for reading. Intervals come from the model’s graph set and sampling error; they assume no hidden confounding beyond what the graph shows.</p></footer>
</main>
</body>
</html>
`;
}

/** The question the page answers, with a plain GET form to ask another (works without scripts). */
function renderQuestion(data: ReportData): string {
  const q = data.question;
  const names = data.graph.nodes.map((n) => n.name);
  const opts = (sel: string | undefined) => names.map((n) => `<option value="${esc(n)}"${n === sel ? ' selected' : ''}>${esc(n)}</option>`).join('');
  const summary = q
    ? `<p>Effect of <strong>${esc(q.treatment)}</strong> on <strong>${esc(q.outcome)}</strong>: arms ${q.arms.map((a) => `“${esc(String(a))}”`).join(', ')} against the reference “${esc(String(q.reference))}”; ${esc(q.better)} ${esc(q.outcome)} is better${q.costs ? `; costs per unit ${esc(q.costs.join(', '))}` : ''}.</p>` +
      (q.defaults.length ? `<p class="meta">Defaults used: ${esc(q.defaults.join('; '))}.</p>` : '')
    : `<p>${esc(data.questionNote ?? '')}</p>`;
  const form =
    `<form class="question" method="get">` +
    `<label>Treatment<select name="treatment">${opts(q?.treatment)}</select></label>` +
    `<label>Outcome<select name="outcome">${opts(q?.outcome)}</select></label>` +
    `<label>Arms (comma-separated)<input name="arms" value="${esc(q ? q.arms.join(',') : '')}"></label>` +
    `<label>Reference<input name="reference" value="${esc(q ? String(q.reference) : '')}"></label>` +
    `<label>Segments by (comma-separated)<input name="by" value="${esc(q ? q.by.join(',') : '')}"></label>` +
    `<label>Better<select name="better"><option value="higher"${q?.better === 'higher' ? ' selected' : ''}>higher</option><option value="lower"${q?.better === 'lower' ? ' selected' : ''}>lower</option></select></label>` +
    `<label>Costs per arm (optional)<input name="costs" value="${esc(q?.costs ? q.costs.join(',') : '')}"></label>` +
    `<button type="submit">Show</button></form>`;
  return `<section id="question" aria-labelledby="question-h"><h2 id="question-h">The question</h2>${summary}${form}</section>`;
}

/** The graph figure and, for screen readers and print, the same edges as a table. */
function renderGraph(data: ReportData): string {
  const q = data.question;
  const spec = (data.version.spec ?? {}) as { treatment?: string; outcome?: string };
  const svg = renderGraphSvg(data.graph, { treatment: q?.treatment ?? spec.treatment, outcome: q?.outcome ?? spec.outcome, tiers: data.tiers });
  const edges = data.graph.edges
    .map((e) => `<tr data-edge="${esc(e.from)}→${esc(e.to)}"><td>${esc(e.from)}</td><td>${esc(e.to)}</td><td class="num">${pct(e.probability)}</td></tr>`)
    .join('');
  const nGraphs = data.graph.graphs.length;
  return (
    `<section id="graph" aria-labelledby="graph-h"><h2 id="graph-h">Causal graph</h2>` +
    `<p>Arrows point from cause to effect. Line width and darkness follow each edge’s probability over the ${nGraphs} graph(s) the fit kept; dashed arrows are below 50%, and arrows at 50% or more show their probability. ` +
    `The treatment has a double border and the tag TREATMENT; the outcome is a rounded pill tagged OUTCOME.${data.tiers ? ' Dotted rules separate the knowledge tiers (earlier tiers cannot be caused by later ones).' : ''} Hover an arrow for its probability.</p>` +
    `<figure class="graph-box">${svg}</figure>` +
    `<p class="caution-h">Reading the probabilities</p><ul class="cautions">${data.reading.cautions.map((c) => `<li>${esc(c)}</li>`).join('')}</ul>` +
    `<h3>Edges</h3><div class="scroll"><table class="edges"><thead><tr><th scope="col">Cause</th><th scope="col">Effect</th><th scope="col">Probability</th></tr></thead><tbody>${edges}</tbody></table></div>` +
    '</section>'
  );
}
