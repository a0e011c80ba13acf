/** A version's graph as Graphviz DOT, and the difference between two versions' graphs. */
import type { VersionGraph } from '../../jobs/compute-tasks.js';

/** Quote a DOT identifier (names are user text: escape quotes and backslashes). */
const q = (s: string): string => `"${s.replace(/\\/g, '\\\\').replace(/"/g, '\\"')}"`;

/** DOT of the edge probabilities: solid edges at probability ≥ 0.5, dashed below; pen width by probability. */
export function graphToDot(graph: VersionGraph, title: string, highlight: { treatment?: string; outcome?: string } = {}): string {
  const lines = [`digraph ${q(title)} {`, '  rankdir=LR;', '  node [shape=box, style=rounded];'];
  for (const n of graph.nodes) {
    const role = n.name === highlight.treatment ? ', penwidth=2.5, xlabel="treatment"' : n.name === highlight.outcome ? ', penwidth=2.5, xlabel="outcome"' : '';
    lines.push(`  ${q(n.name)} [label=${q(`${n.name}\n(${n.kind})`)}${role}];`);
  }
  for (const e of graph.edges) {
    const style = e.probability >= 0.5 ? 'solid' : 'dashed';
    const width = (0.5 + 2.5 * e.probability).toFixed(2);
    lines.push(`  ${q(e.from)} -> ${q(e.to)} [label=${q(e.probability.toFixed(2))}, style=${style}, penwidth=${width}];`);
  }
  lines.push('}');
  return lines.join('\n') + '\n';
}

export interface GraphDiff {
  /** Edges with probability ≥ threshold in `to` but not in `from`. */
  gained: Array<{ from: string; to: string; probability: number }>;
  /** Edges with probability ≥ threshold in `from` but not in `to`. */
  lost: Array<{ from: string; to: string; probability: number }>;
  /** Every edge whose probability moved by at least `minChange`. */
  changed: Array<{ from: string; to: string; before: number; after: number; change: number }>;
  threshold: number;
}

/** What changed between two versions' graphs ("present" means probability ≥ threshold). */
export function diffGraphs(before: VersionGraph, after: VersionGraph, threshold = 0.5, minChange = 0.05): GraphDiff {
  const key = (e: { from: string; to: string }) => `${e.from}\u0000${e.to}`;
  const a = new Map(before.edges.map((e) => [key(e), e]));
  const b = new Map(after.edges.map((e) => [key(e), e]));
  const gained: GraphDiff['gained'] = [];
  const lost: GraphDiff['lost'] = [];
  const changed: GraphDiff['changed'] = [];
  for (const k of new Set([...a.keys(), ...b.keys()])) {
    const pa = a.get(k)?.probability ?? 0;
    const pb = b.get(k)?.probability ?? 0;
    const [from, to] = k.split('\u0000');
    if (pb >= threshold && pa < threshold) gained.push({ from, to, probability: pb });
    if (pa >= threshold && pb < threshold) lost.push({ from, to, probability: pa });
    if (Math.abs(pb - pa) >= minChange) changed.push({ from, to, before: pa, after: pb, change: Math.round((pb - pa) * 1e4) / 1e4 });
  }
  changed.sort((x, y) => Math.abs(y.change) - Math.abs(x.change));
  return { gained, lost, changed, threshold };
}
