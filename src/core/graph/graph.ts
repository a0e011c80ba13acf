/**
 * Graphs over n named nodes as an n×n 0/1 adjacency, row-major: adj[i*n + j] = 1 marks i→j.
 * A DAG never has both marks; in a CPDAG both marks set means the undirected edge i—j.
 */
export interface Graph {
  readonly n: number;
  readonly names: readonly string[];
  readonly adj: Uint8Array;
}

export type GraphKind = 'dag' | 'cpdag';

export function emptyGraph(names: readonly string[]): Graph {
  return { n: names.length, names, adj: new Uint8Array(names.length * names.length) };
}

export function hasEdge(g: Graph, i: number, j: number): boolean {
  return g.adj[i * g.n + j] === 1;
}

/** Directed i→j (mark one way only). */
export function isDirected(g: Graph, i: number, j: number): boolean {
  return g.adj[i * g.n + j] === 1 && g.adj[j * g.n + i] === 0;
}

export function isUndirected(g: Graph, i: number, j: number): boolean {
  return g.adj[i * g.n + j] === 1 && g.adj[j * g.n + i] === 1;
}

export function parents(g: Graph, j: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < g.n; i++) if (g.adj[i * g.n + j] === 1 && g.adj[j * g.n + i] === 0) out.push(i);
  return out;
}

export function children(g: Graph, i: number): number[] {
  const out: number[] = [];
  for (let j = 0; j < g.n; j++) if (g.adj[i * g.n + j] === 1 && g.adj[j * g.n + i] === 0) out.push(j);
  return out;
}

export function edgeList(g: Graph): Array<[string, string]> {
  const out: Array<[string, string]> = [];
  for (let i = 0; i < g.n; i++) for (let j = 0; j < g.n; j++) if (g.adj[i * g.n + j] === 1) out.push([g.names[i], g.names[j]]);
  return out;
}

export function graphFromEdges(names: readonly string[], edges: ReadonlyArray<readonly [string, string]>): Graph {
  const g = emptyGraph(names);
  const index = new Map(names.map((nm, i) => [nm, i] as const));
  for (const [a, b] of edges) {
    const i = index.get(a);
    const j = index.get(b);
    if (i === undefined || j === undefined) throw new RangeError(`edge ${a}→${b} names an unknown variable`);
    g.adj[i * g.n + j] = 1;
  }
  return g;
}
