/**
 * The version's graph as an inline SVG, laid out by dagre (a layered, Sugiyama-style layout
 * from the registry package @dagrejs/dagre). When the model has tiers, each tier is a band of
 * layers: an invisible anchor node per tier boundary, with every node of tier k placed below
 * anchor k and above anchor k+1, so no node leaves its tier's band.
 *
 * Edges: stroke width and opacity grow with the edge's probability; edges below 0.5 are
 * dashed (meaning is never carried by colour or opacity alone); every edge has a <title>
 * (hover) and edges at 0.5 or more carry a visible probability label. The treatment is drawn
 * with a double border and an upper-case "TREATMENT" tag, the outcome as a pill with an
 * "OUTCOME" tag.
 */
import dagre from '@dagrejs/dagre';
import type { VersionGraph } from '../../jobs/compute-tasks.js';
import { esc, pct } from './html.js';

export interface GraphSvgOptions {
  treatment?: string;
  outcome?: string;
  tiers?: readonly (readonly string[])[] | null;
}

const NODE_H = 44;
const CHAR_W = 7.4;
const LABEL_MIN_P = 0.5;

/** Width (in SVG units) of a node label of `text`. */
const nodeWidth = (text: string): number => Math.max(90, Math.round(text.length * CHAR_W + 28));

/** Render the graph; every node carries data-node="<name>" and every edge data-edge="<from>→<to>". */
export function renderGraphSvg(graph: VersionGraph, opts: GraphSvgOptions = {}): string {
  const g = new dagre.graphlib.Graph({ multigraph: false, compound: false });
  g.setGraph({ rankdir: 'TB', nodesep: 28, ranksep: 46, edgesep: 12, marginx: 16, marginy: 16 });
  g.setDefaultEdgeLabel(() => ({}));
  const id = new Map<string, string>();
  graph.nodes.forEach((n, i) => {
    id.set(n.name, `n${i}`);
    const tag = n.name === opts.treatment || n.name === opts.outcome ? 14 : 0;
    g.setNode(`n${i}`, { width: nodeWidth(n.name), height: NODE_H + tag });
  });
  const tiers = (opts.tiers ?? []).map((t) => t.filter((name) => id.has(name))).filter((t) => t.length > 0);
  if (tiers.length > 1) {
    for (let k = 0; k <= tiers.length; k++) g.setNode(`tier${k}`, { width: 0, height: 0 });
    for (let k = 0; k < tiers.length; k++) {
      g.setEdge(`tier${k}`, `tier${k + 1}`, { minlen: 2, weight: 0 });
      for (const name of tiers[k]) {
        g.setEdge(`tier${k}`, id.get(name)!, { minlen: 1, weight: 0 });
        g.setEdge(id.get(name)!, `tier${k + 1}`, { minlen: 1, weight: 0 });
      }
    }
  }
  for (const e of graph.edges) {
    const a = id.get(e.from);
    const b = id.get(e.to);
    if (!a || !b || a === b) continue;
    const labelled = e.probability >= LABEL_MIN_P;
    // A visible label needs room: dagre reserves it at the middle of the edge.
    const prior = g.edge(a, b) as { minlen?: number } | undefined;
    g.setEdge(a, b, { minlen: Math.max(1, prior?.minlen ?? 1), weight: 1 + 4 * e.probability, ...(labelled ? { width: 34, height: 16, labelpos: 'c' } : {}) });
  }
  dagre.layout(g);
  const W = Math.ceil((g.graph().width ?? 400) + (tiers.length > 1 ? 50 : 0));
  const H = Math.ceil(g.graph().height ?? 300);

  const parts: string[] = [];
  parts.push(
    `<svg class="graph" role="img" aria-labelledby="graph-title graph-desc" viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" xmlns="http://www.w3.org/2000/svg">`,
    `<title id="graph-title">Causal graph: ${graph.nodes.length} variables, ${graph.edges.length} edges with probability</title>`,
    `<desc id="graph-desc">Arrows point from cause to effect. Thicker, darker arrows are more probable; dashed arrows have probability below 50%.</desc>`,
    '<defs><marker id="arrow" viewBox="0 0 10 10" refX="9" refY="5" markerUnits="userSpaceOnUse" markerWidth="11" markerHeight="11" orient="auto-start-reverse"><path d="M0,0 L10,5 L0,10 z" fill="#1f2933"/></marker></defs>',
  );
  // Tier bands: a dashed rule and a label at each boundary anchor.
  if (tiers.length > 1) {
    for (let k = 0; k < tiers.length; k++) {
      const top = g.node(`tier${k}`);
      if (!top || top.y === undefined) continue;
      parts.push(
        `<g class="tier"><line x1="4" x2="${W - 4}" y1="${top.y.toFixed(1)}" y2="${top.y.toFixed(1)}"/>` +
          `<text x="${W - 6}" y="${(top.y + 13).toFixed(1)}" text-anchor="end">tier ${k + 1}</text></g>`,
      );
    }
  }
  for (const e of graph.edges) {
    const a = id.get(e.from);
    const b = id.get(e.to);
    if (!a || !b || a === b) continue;
    const label = g.edge(a, b) as { points?: Array<{ x: number; y: number }>; x?: number; y?: number };
    const pts = label.points ?? [];
    if (pts.length < 2) continue;
    const d = smoothPath(pts);
    const p = e.probability;
    const width = (0.8 + 3.2 * p).toFixed(2);
    const opacity = (0.3 + 0.7 * p).toFixed(2);
    const dashed = p < LABEL_MIN_P ? ' stroke-dasharray="5 4"' : '';
    const title = `${esc(e.from)} → ${esc(e.to)}: probability ${pct(p)}`;
    let text = '';
    if (p >= LABEL_MIN_P) {
      const lx = label.x ?? pts[Math.floor(pts.length / 2)].x;
      const ly = label.y ?? pts[Math.floor(pts.length / 2)].y;
      text = `<text class="edge-label" x="${lx.toFixed(1)}" y="${(ly + 4).toFixed(1)}" text-anchor="middle">${p.toFixed(2)}</text>`;
    }
    parts.push(
      `<g class="edge" data-edge="${esc(e.from)}→${esc(e.to)}" data-probability="${p}"><title>${title}</title>` +
        `<path d="${d}" stroke-width="${width}" stroke-opacity="${opacity}"${dashed} marker-end="url(#arrow)"/>${text}</g>`,
    );
  }
  for (const n of graph.nodes) {
    const box = g.node(id.get(n.name)!);
    const x = box.x! - box.width / 2;
    const y = box.y! - box.height / 2;
    const isT = n.name === opts.treatment;
    const isO = n.name === opts.outcome;
    const role = isT ? 'treatment' : isO ? 'outcome' : 'variable';
    const tagH = isT || isO ? 14 : 0;
    const shape: string[] = [];
    const by = y + tagH;
    const bh = box.height - tagH;
    if (isO) {
      shape.push(`<rect class="node-box outcome" x="${x.toFixed(1)}" y="${by.toFixed(1)}" width="${box.width}" height="${bh}" rx="${bh / 2}"/>`);
    } else {
      shape.push(`<rect class="node-box${isT ? ' treatment' : ''}" x="${x.toFixed(1)}" y="${by.toFixed(1)}" width="${box.width}" height="${bh}" rx="6"/>`);
      if (isT) shape.push(`<rect class="node-inner" x="${(x + 3).toFixed(1)}" y="${(by + 3).toFixed(1)}" width="${box.width - 6}" height="${bh - 6}" rx="4"/>`);
    }
    if (isT || isO) shape.push(`<text class="node-tag" x="${box.x!.toFixed(1)}" y="${(y + 10).toFixed(1)}" text-anchor="middle">${isT ? 'TREATMENT' : 'OUTCOME'}</text>`);
    parts.push(
      `<g class="node" data-node="${esc(n.name)}" data-role="${role}"><title>${esc(n.name)} (${esc(n.kind)}${n.levels ? `: ${esc(n.levels.join(', '))}` : ''})${isT || isO ? ` — the ${role}` : ''}</title>` +
        shape.join('') +
        `<text class="node-name" x="${box.x!.toFixed(1)}" y="${(by + bh / 2 - 1).toFixed(1)}" text-anchor="middle">${esc(n.name)}</text>` +
        `<text class="node-kind" x="${box.x!.toFixed(1)}" y="${(by + bh / 2 + 12).toFixed(1)}" text-anchor="middle">${esc(n.kind)}</text></g>`,
    );
  }
  parts.push('</svg>');
  return parts.join('\n');
}

/** A path through dagre's points: straight ends, quadratic bends through the midpoints between inner points. */
function smoothPath(pts: ReadonlyArray<{ x: number; y: number }>): string {
  const f = (v: number) => v.toFixed(1);
  if (pts.length <= 2) return `M${f(pts[0].x)},${f(pts[0].y)} L${f(pts[pts.length - 1].x)},${f(pts[pts.length - 1].y)}`;
  let d = `M${f(pts[0].x)},${f(pts[0].y)}`;
  for (let i = 1; i < pts.length - 1; i++) {
    const mx = (pts[i].x + pts[i + 1].x) / 2;
    const my = (pts[i].y + pts[i + 1].y) / 2;
    d += i === pts.length - 2 ? ` Q${f(pts[i].x)},${f(pts[i].y)} ${f(pts[i + 1].x)},${f(pts[i + 1].y)}` : ` Q${f(pts[i].x)},${f(pts[i].y)} ${f(mx)},${f(my)}`;
  }
  return d;
}
