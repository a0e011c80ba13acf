/**
 * The heavy computations a job runs off the event loop, by name. Each takes and returns
 * plain, structured-clonable data (typed arrays included), so it can run in a worker
 * thread (compute-pool.ts) or, in tests and benchmarks, in the calling thread.
 */
import type { Knowledge } from '../core/discovery/knowledge.js';
import type { LearnOptions } from '../core/discovery/learn.js';
import { runReplicate, unpackFrame, type FrameBuffer, type ReplicateResult } from '../core/discovery/replicate.js';
import { chooseLearner, type ConcreteLearner } from '../core/discovery/auto.js';
import { availableLearners } from '../core/discovery/registry.js';
import { imputeMissing } from '../core/frame/impute.js';
import { standardise } from '../core/frame/standardise.js';
import { mergeReplicates } from '../core/discovery/dag-set.js';
import { graphFromEdges, type Graph } from '../core/graph/graph.js';
import { topologicalOrder } from '../core/graph/index.js';
import { Rng } from '../core/random/rng.js';
import { fitModel, type FitModelOptions, type GraphSetInput } from '../core/scm/fit-model.js';
import { serialise } from '../core/scm/serialise.js';

export interface ReplicateInput {
  readonly frame: FrameBuffer;
  readonly knowledge: Knowledge;
  readonly options: LearnOptions;
  readonly replicateIndex: number;
  readonly seed: number;
}

/** A replicate's graph, compact for the queue: the adjacency as bytes, plus the kind and notes. */
export interface ReplicateOutput {
  readonly learner: string;
  readonly kind: 'dag' | 'cpdag';
  readonly names: readonly string[];
  readonly adj: number[];
  readonly notes: readonly string[];
  readonly missing: ReplicateResult['missing'];
}

/** Input of the compile task: the fit's data, its replicate graphs (or a fixed graph), mechanism options. */
export interface CompileInput {
  readonly frame: FrameBuffer;
  readonly replicates: readonly ReplicateOutput[];
  readonly fixedEdges?: ReadonlyArray<readonly [string, string]>;
  readonly family: FitModelOptions['family'];
  readonly noise: 'gaussian' | 'empirical';
  readonly referenceRows: number;
  readonly seed: number;
  /** Most distinct DAGs kept in the version (the heaviest; weights renormalised). Default 20. */
  readonly maxGraphs?: number;
}

/** The graph of a version as the API shows it. */
export interface VersionGraph {
  readonly nodes: ReadonlyArray<{ name: string; kind: string; levels?: readonly string[] }>;
  /** Every edge with a positive probability over the graph set. */
  readonly edges: ReadonlyArray<{ from: string; to: string; probability: number }>;
  /** The distinct DAGs kept, heaviest first. */
  readonly graphs: ReadonlyArray<{ weight: number; count: number; edges: Array<[string, string]> }>;
}

export interface CompileOutput {
  readonly artifact: Uint8Array;
  readonly graph: VersionGraph;
  readonly diagnostics: Record<string, unknown>;
  readonly timings: { compileMs: number };
}

export const computeTasks = {
  /** Resolve the `auto` learner once per fit on the whole (imputed, standardised) data, so every replicate runs the same learner. */
  'choose-learner'(input: { frame: FrameBuffer }): { learner: ConcreteLearner; notes: string[] } {
    const data = standardise(imputeMissing(unpackFrame(input.frame)).frame).frame;
    const choice = chooseLearner(data, availableLearners());
    return { learner: choice.learner, notes: [...choice.reasons.map((r) => `auto: ${r}`), `auto: chose ${choice.learner}`] };
  },

  /** Merge replicate graphs into a weighted DAG set (or take the fixed graph), fit mechanisms, compile, serialise. */
  compile(input: CompileInput): CompileOutput {
    const t0 = performance.now();
    const frame = unpackFrame(input.frame);
    const names = frame.columns.map((c) => c.name);
    const n = names.length;
    let set: GraphSetInput;
    const notes: string[] = [];
    if (input.fixedEdges) {
      const graph = graphFromEdges(names, input.fixedEdges);
      if (!topologicalOrder(graph)) throw new RangeError('the fixed graph has a cycle');
      set = { names, graphs: [{ graph, weight: 1, count: 1 }] };
      notes.push('fixed graph given by the user: no learning, one graph of weight 1');
    } else {
      const graphs = input.replicates.map((r) => ({ kind: r.kind, graph: { n, names, adj: Uint8Array.from(r.adj) } as Graph }));
      const merged = mergeReplicates(graphs, names, Rng.create(input.seed).stream(0x7fffffff), { maxGraphs: input.maxGraphs ?? 20 });
      set = merged;
      notes.push(...merged.notes);
    }
    const model = fitModel(frame, set, {
      family: input.family,
      noise: input.noise,
      referenceRows: input.referenceRows,
      seed: input.seed,
      graphSource: input.fixedEdges ? 'fixed' : 'learned',
    });
    const artifact = serialise(model);
    const edges: Array<{ from: string; to: string; probability: number }> = [];
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        const p = model.edgeProbability[i * n + j];
        if (p > 0) edges.push({ from: names[i], to: names[j], probability: Math.round(p * 1e4) / 1e4 });
      }
    }
    edges.sort((a, b) => b.probability - a.probability || a.from.localeCompare(b.from) || a.to.localeCompare(b.to));
    const graphs = set.graphs.map((g) => {
      const list: Array<[string, string]> = [];
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (g.graph.adj[i * n + j]) list.push([names[i], names[j]]);
      return { weight: g.weight, count: g.count ?? 1, edges: list };
    });
    const nodes = frame.columns.map((c) => (c.levels ? { name: c.name, kind: c.kind, levels: [...c.levels] } : { name: c.name, kind: c.kind }));
    const missingRows = input.replicates.reduce((m, r) => Math.max(m, r.missing.rowsAffected), 0);
    return {
      artifact,
      graph: { nodes, edges, graphs },
      diagnostics: {
        replicates: input.replicates.length,
        distinctGraphs: set.graphs.length,
        graphNotes: notes,
        modelNotes: model.meta.notes,
        mechanisms: model.nMechanisms,
        referenceRows: model.nReference,
        missingRowsPerReplicateMax: missingRows,
      },
      timings: { compileMs: Math.round(performance.now() - t0) },
    };
  },

  replicate(input: ReplicateInput): ReplicateOutput {
    const r = runReplicate(input);
    return {
      learner: r.learner,
      kind: r.kind,
      names: [...r.graph.names],
      adj: Array.from(r.graph.adj),
      notes: [...r.notes],
      missing: r.missing,
    };
  },
};

export type ComputeTaskName = keyof typeof computeTasks;
export type ComputeInput<K extends ComputeTaskName> = Parameters<(typeof computeTasks)[K]>[0];
export type ComputeOutput<K extends ComputeTaskName> = ReturnType<(typeof computeTasks)[K]>;
