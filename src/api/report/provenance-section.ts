/**
 * Provenance of a version (dataset and batches, learner, replicates, mechanisms, fit time) and
 * how its graph changed since the previous version (models.diff), read from the stored
 * version as the versions API returns it.
 */
import type { ReportData } from '../../app/reports/report-data.js';
import { esc, num, pct } from './html.js';

interface SpecView {
  datasetId?: string;
  learner?: string;
  resolvedLearner?: string;
  replicates?: number;
  seed?: number;
  fixedGraph?: unknown;
  mechanisms?: { family?: string; noise?: string };
}
interface DiagnosticsView {
  learner?: string;
  replicates?: number;
  distinctGraphs?: number;
  referenceRows?: number;
  graphNotes?: string[];
  modelNotes?: string[];
  learnerNotes?: string[];
}
interface TimingsView {
  totalMs?: number;
  compileMs?: number;
}

const seconds = (ms: number | undefined) => (ms === undefined ? 'n/a' : `${num(ms / 1000)} s`);
const list = (xs: readonly unknown[] | undefined) => (xs && xs.length ? `<ul>${xs.map((x) => `<li>${esc(x)}</li>`).join('')}</ul>` : '');

/** The provenance section. */
export function renderProvenance(data: ReportData): string {
  const v = data.version;
  const spec = (v.spec ?? {}) as SpecView;
  const d = (v.diagnostics ?? {}) as DiagnosticsView;
  const t = (v.timings ?? {}) as TimingsView;
  const learner = spec.fixedGraph ? 'none: the graph was given by the user' : `${esc(d.learner ?? spec.resolvedLearner ?? spec.learner ?? 'n/a')}${spec.learner === 'auto' ? ' (chosen automatically)' : ''}`;
  const rows: Array<[string, string]> = [
    ['Model', `${esc(data.model.name)} <span class="id">(${esc(data.model.id)})</span>`],
    ['Version', `${v.number} <span class="id">(${esc(v.id)})</span>, fitted ${esc(v.createdAt)}`],
    ['Dataset', `<span class="id">${esc(spec.datasetId ?? 'n/a')}</span>, batches ${esc(v.datasetBatches.join(', '))}, ${v.rowCount.toLocaleString('en-US')} rows`],
    ['Learner', learner],
    ['Bootstrap replicates', spec.fixedGraph ? '0 (fixed graph)' : `${esc(d.replicates ?? spec.replicates ?? 'n/a')}, giving ${esc(d.distinctGraphs ?? 'n/a')} distinct graph(s)`],
    ['Mechanisms', `${esc(spec.mechanisms?.family ?? 'n/a')} with ${esc(spec.mechanisms?.noise ?? 'n/a')} noise; reference sample ${esc(d.referenceRows ?? 'n/a')} rows; seed ${esc(spec.seed ?? 'n/a')}`],
    ['Fit time', `${seconds(t.totalMs)} in total, of which compiling ${seconds(t.compileMs)}`],
  ];
  const notes = [...(d.learnerNotes ?? []), ...(d.graphNotes ?? []), ...(d.modelNotes ?? [])];
  return (
    `<section id="provenance" aria-labelledby="prov-h"><h2 id="prov-h">Where this version comes from</h2>` +
    `<div class="scroll"><table class="facts"><tbody>${rows.map(([k, val]) => `<tr><th scope="row">${k}</th><td>${val}</td></tr>`).join('')}</tbody></table></div>` +
    (notes.length ? `<p>Fit notes:</p>${list(notes)}` : '') +
    renderChanges(data) +
    '</section>'
  );
}

/** How the graph changed since the previous version. */
function renderChanges(data: ReportData): string {
  const h = '<h3 id="changes">Changes since the previous version</h3>';
  if (!data.previous) return `${h}<p>This is the model’s first version.</p>`;
  const { number, diff } = data.previous;
  const edge = (e: { from: string; to: string }) => `${esc(e.from)} → ${esc(e.to)}`;
  const parts = [`<p>Compared with version ${number} (an edge counts as present at probability ≥ ${pct(diff.threshold)}):</p><ul class="diff">`];
  parts.push(`<li><strong>Gained:</strong> ${diff.gained.length ? diff.gained.map((e) => `${edge(e)} (${pct(e.probability)})`).join('; ') : 'none'}</li>`);
  parts.push(`<li><strong>Lost:</strong> ${diff.lost.length ? diff.lost.map((e) => `${edge(e)} (was ${pct(e.probability)})`).join('; ') : 'none'}</li>`);
  parts.push(`<li><strong>Probability moved:</strong> ${diff.changed.length ? diff.changed.map((e) => `${edge(e)} ${pct(e.before)} → ${pct(e.after)}`).join('; ') : 'no edge moved by 5 points or more'}</li></ul>`);
  return h + parts.join('');
}
