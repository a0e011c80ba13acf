/**
 * The report page's stylesheet (inline in the page): readable from phone width (375 px) to
 * desktop (1280 px), wide tables scroll sideways inside their box, and a print stylesheet
 * that drops the question form, lets tables and the graph use the page width and keeps
 * rows and figures from splitting across pages.
 */
export const REPORT_CSS = `
:root { --ink: #1f2933; --muted: #52606d; --line: #cbd2d9; --accent: #0b5cad; --good: #1c6e3d; --bg: #ffffff; --panel: #f5f7fa; }
* { box-sizing: border-box; }
html { -webkit-text-size-adjust: 100%; }
body { margin: 0; font: 16px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "DejaVu Sans", sans-serif; color: var(--ink); background: var(--bg); }
main { max-width: 1200px; margin: 0 auto; padding: 16px 24px 48px; }
header.top { border-bottom: 2px solid var(--ink); margin-bottom: 8px; }
h1 { font-size: 1.6rem; margin: 8px 0 4px; overflow-wrap: anywhere; }
h2 { font-size: 1.25rem; margin: 32px 0 8px; border-bottom: 1px solid var(--line); padding-bottom: 4px; }
h3 { font-size: 1.05rem; margin: 20px 0 6px; }
p, li { max-width: 80ch; }
.meta { color: var(--muted); margin: 0 0 8px; overflow-wrap: anywhere; }
.id { color: var(--muted); font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 0.85em; overflow-wrap: anywhere; }
nav.toc ul { list-style: none; padding: 0; display: flex; flex-wrap: wrap; gap: 4px 16px; margin: 8px 0; }
nav.toc a { color: var(--accent); }
.scroll { overflow-x: auto; -webkit-overflow-scrolling: touch; max-width: 100%; border: 1px solid var(--line); border-radius: 4px; }
table { border-collapse: collapse; width: 100%; }
th, td { text-align: left; vertical-align: top; padding: 6px 10px; border-bottom: 1px solid var(--line); }
thead th { background: var(--panel); white-space: nowrap; }
td.num, .num { font-variant-numeric: tabular-nums; white-space: nowrap; }
.uplift td, .effects td { min-width: 12rem; }
.uplift td .num, .uplift td .xcnum { display: block; }
.xcnum { color: var(--muted); font-size: 0.88em; }
.rows { color: var(--muted); font-weight: normal; font-size: 0.88em; }
td.rec { background: #eef7f1; }
.badge { display: inline-block; font-weight: 700; color: var(--good); border: 1px solid var(--good); border-radius: 3px; padding: 0 4px; font-size: 0.85em; }
td.recommended { white-space: nowrap; }
.graph-box { margin: 0; overflow-x: auto; border: 1px solid var(--line); border-radius: 4px; background: #fff; }
svg.graph { display: block; max-width: 100%; height: auto; margin: 0 auto; font-family: inherit; }
svg.graph .edge path { fill: none; stroke: #1f2933; }
svg.graph .edge-label { font-size: 11px; fill: #1f2933; paint-order: stroke; stroke: #fff; stroke-width: 3px; }
svg.graph .node-box { fill: #f5f7fa; stroke: #52606d; stroke-width: 1.5; }
svg.graph .node-box.treatment { fill: #e3effb; stroke: var(--accent); stroke-width: 2.5; }
svg.graph .node-inner { fill: none; stroke: var(--accent); stroke-width: 1; }
svg.graph .node-box.outcome { fill: #eef7f1; stroke: var(--good); stroke-width: 2.5; }
svg.graph .node-name { font-size: 13px; font-weight: 600; fill: #1f2933; }
svg.graph .node-kind { font-size: 10px; fill: #52606d; }
svg.graph .node-tag { font-size: 10px; font-weight: 700; letter-spacing: 0.06em; fill: #1f2933; }
svg.graph .tier line { stroke: #9aa5b1; stroke-dasharray: 2 4; }
svg.graph .tier text { font-size: 10px; fill: #52606d; }
svg.bar { display: block; max-width: 100%; height: auto; }
svg .axis { stroke: #cbd2d9; stroke-width: 1; }
svg .zero { stroke: #52606d; stroke-width: 1; stroke-dasharray: 3 2; }
svg .ci, svg .cap { stroke: #1f2933; stroke-width: 2; }
svg .est { fill: #1f2933; }
svg .xc { fill: #fff; stroke: var(--accent); stroke-width: 1.8; }
.legend { font-size: 0.9em; color: var(--muted); display: flex; align-items: center; gap: 6px; flex-wrap: wrap; }
.refused { border-left: 4px solid #b42318; padding: 4px 10px; background: #fdf2f1; }
.cautions li { margin: 2px 0; }
.diag { border-top: 1px dashed var(--line); }
form.question { background: var(--panel); border: 1px solid var(--line); border-radius: 4px; padding: 10px 12px; display: grid; grid-template-columns: repeat(auto-fill, minmax(14rem, 1fr)); gap: 8px 16px; }
form.question label { display: flex; flex-direction: column; font-size: 0.9em; }
form.question input, form.question select { font: inherit; padding: 4px 6px; }
form.question button { font: inherit; padding: 6px 12px; align-self: end; }
footer { margin-top: 40px; color: var(--muted); font-size: 0.9em; border-top: 1px solid var(--line); padding-top: 8px; }
@media (max-width: 640px) {
  body { font-size: 15px; }
  main { padding: 10px 12px 32px; }
  h1 { font-size: 1.3rem; }
  th, td { padding: 5px 6px; }
  /* Keep graph labels legible on a phone: the figure scrolls sideways instead of shrinking below 540 px. */
  svg.graph { min-width: 540px; }
}
@media print {
  @page { margin: 14mm; }
  body { font-size: 10pt; color: #000; background: #fff; }
  main { max-width: none; padding: 0; }
  nav.toc, form.question { display: none; }
  .scroll, .graph-box { overflow: visible; border: none; }
  table { page-break-inside: auto; }
  tr, .diag, svg.graph, .legend { break-inside: avoid; page-break-inside: avoid; }
  h2, h3 { break-after: avoid; page-break-after: avoid; }
  td.rec { background: none; }
  .uplift td, .effects td { min-width: 0; }
  svg.graph { max-height: 18cm; width: auto; }
  a { color: inherit; text-decoration: none; }
}
`;
