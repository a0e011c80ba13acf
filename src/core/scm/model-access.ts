/**
 * Read helpers over a compiled model's graph set (for the effects layer and the simulator):
 * parents, descendant/ancestor masks and a topological order of graph g, as typed arrays.
 */
import type { Graph } from '../graph/graph.js';
import type { CompiledModel } from './compiled-model.js';

/** Index of variable `name`, or -1. */
export function variableIndex(model: CompiledModel, name: string): number {
  return model.names.indexOf(name);
}

/** Graph g of the set as a core Graph (a copy of its adjacency). */
export function graphAt(model: CompiledModel, g: number): Graph {
  checkGraph(model, g);
  const p = model.p;
  return { n: p, names: model.names, adj: model.adjacency.slice(g * p * p, (g + 1) * p * p) };
}

/** Parents of node j in graph g, ascending. */
export function parentsIn(model: CompiledModel, g: number, j: number): number[] {
  checkGraph(model, g);
  const p = model.p;
  const base = g * p * p;
  const out: number[] = [];
  for (let i = 0; i < p; i++) if (model.adjacency[base + i * p + j] === 1) out.push(i);
  return out;
}

/** Mask of the descendants of the `from` nodes in graph g (the nodes themselves excluded unless reachable from another one). */
export function descendantMask(model: CompiledModel, g: number, from: readonly number[]): Uint8Array {
  return reach(model, g, from, true);
}

/** Mask of the ancestors of the `to` nodes in graph g (the nodes themselves excluded unless ancestors of another one). */
export function ancestorMask(model: CompiledModel, g: number, to: readonly number[]): Uint8Array {
  return reach(model, g, to, false);
}

/** Whether graph g has a directed path from i to j (i ≠ j). */
export function hasDirectedPathIn(model: CompiledModel, g: number, i: number, j: number): boolean {
  return i !== j && descendantMask(model, g, [i])[j] === 1;
}

/** Probability over the graph set (sum of graph weights) that a directed path i ⇝ j exists. */
export function pathProbability(model: CompiledModel, i: number, j: number): number {
  let s = 0;
  for (let g = 0; g < model.nGraphs; g++) if (hasDirectedPathIn(model, g, i, j)) s += model.graphWeights[g];
  return s;
}

function reach(model: CompiledModel, g: number, start: readonly number[], forward: boolean): Uint8Array {
  checkGraph(model, g);
  const p = model.p;
  const base = g * p * p;
  const adj = model.adjacency;
  const mask = new Uint8Array(p);
  const stack = new Int32Array(p + start.length);
  let top = 0;
  for (const s of start) stack[top++] = s;
  while (top > 0) {
    const v = stack[--top];
    for (let w = 0; w < p; w++) {
      const e = forward ? adj[base + v * p + w] : adj[base + w * p + v];
      if (e === 1 && mask[w] === 0) {
        mask[w] = 1;
        stack[top++] = w;
      }
    }
  }
  return mask;
}

/**
 * A topological order (Kahn's algorithm, smallest index first) of the p × p adjacency
 * adj[base + i*p + j] plus the extra edges `extra` ([from, to] pairs); null if cyclic.
 */
export function orderOf(adj: Uint8Array, base: number, p: number, extra: ReadonlyArray<readonly [number, number]> = []): Int32Array | null {
  const indeg = new Int32Array(p);
  const ex = new Uint8Array(p * p);
  for (const [a, b] of extra) ex[a * p + b] = 1;
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) if (adj[base + i * p + j] === 1 || ex[i * p + j] === 1) indeg[j]++;
  const order = new Int32Array(p);
  const done = new Uint8Array(p);
  for (let k = 0; k < p; k++) {
    let v = -1;
    for (let i = 0; i < p; i++) if (done[i] === 0 && indeg[i] === 0) {
      v = i;
      break;
    }
    if (v < 0) return null;
    done[v] = 1;
    order[k] = v;
    for (let j = 0; j < p; j++) if (adj[base + v * p + j] === 1 || ex[v * p + j] === 1) indeg[j]--;
  }
  return order;
}

function checkGraph(model: CompiledModel, g: number): void {
  if (!(Number.isInteger(g) && g >= 0 && g < model.nGraphs)) {
    throw new RangeError(`graph index ${g} out of range: the model has ${model.nGraphs} graph(s)`);
  }
}
