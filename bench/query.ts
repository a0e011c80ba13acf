/**
 * Query-latency benchmark (`npm run bench:query`): a 20-node nonlinear model (MLP mechanisms,
 * a 4-level categorical treatment) with 10 graphs and 2,000 reference rows.
 * Prints p50/p99 of
 *  - a cold ATE query (fresh EffectCache: simulation of both arms in every graph, adjustment
 *    sets, AIPW cross-check per distinct adjustment set, intervals, diagnostics),
 *  - a warm segment query (per-unit outcomes and cross-check scores already cached),
 *  - an uplift table of 9 segments (quantile bins) × 3 arms against a reference, cold and warm,
 * and the floating-point rate of the simulation kernel against a tight reference loop (a
 * fused multiply-add over Float64Arrays) on the same machine.
 * Writes bench/results/query.json and the "## Queries" section of docs/benchmarks.md.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { EffectCache, estimateEffect, upliftTable } from '../src/core/effects/index.js';
import type { Graph } from '../src/core/graph/graph.js';
import { topologicalOrder } from '../src/core/graph/topological-order.js';
import { descendants } from '../src/core/graph/reachability.js';
import { Rng } from '../src/core/random/rng.js';
import { MECH_HIDDEN, MECH_N_IN, MECH_N_OUT, MECH_STRIDE, type CompiledModel } from '../src/core/scm/compiled-model.js';
import { fitModel } from '../src/core/scm/fit-model.js';
import { resolveArm } from '../src/core/effects/arms.js';
import { graphAdjustment } from '../src/core/effects/cross-check.js';
import { simulateArms, simulationScratch } from '../src/core/effects/counterfactual.js';
import { generateDataset } from '../src/core/synthetic/index.js';
import { updateSection } from './docs-section.js';

const P = 20;
const GRAPHS = 10;
const ROWS = 2000;

/** CPU time of this process in ms (user + system): on a shared machine it is closer to the one-core cost than wall time. */
function cpuMs(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
}

function pct(xs: number[], q: number): number {
  const s = xs.slice().sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(q * s.length))];
}

function perturb(g: Graph, rng: Rng): Graph {
  for (;;) {
    const adj = g.adj.slice();
    const edges: Array<[number, number]> = [];
    for (let i = 0; i < g.n; i++) for (let j = 0; j < g.n; j++) if (adj[i * g.n + j] === 1) edges.push([i, j]);
    const changes = 1 + rng.int(3);
    for (let c = 0; c < changes; c++) {
      const [i, j] = edges[rng.int(edges.length)];
      adj[i * g.n + j] = 0;
      if (rng.uniform() < 0.5) adj[j * g.n + i] = 1;
    }
    const h = { n: g.n, names: g.names, adj };
    if (topologicalOrder(h)) return h;
  }
}

function buildModel(): { model: CompiledModel; treatment: string; outcome: string; segmentVar: string; fitSeconds: number } {
  for (let seed = 1; ; seed++) {
    const ds = generateDataset(
      { graph: 'er', nodes: P, expectedEdges: 30, rows: ROWS, mechanism: 'mlp', noise: 'gaussian', categoricalShare: 0.15, categoricalLevels: 4 },
      seed,
    );
    const g = ds.graph;
    const kinds = ds.frame.columns.map((c) => c.kind);
    // Treatment: a categorical node with the most continuous descendants.
    let t = -1;
    let best = 0;
    for (let j = 0; j < P; j++) {
      if (kinds[j] !== 'categorical') continue;
      const de = descendants(g, j);
      let cnt = 0;
      for (let k = 0; k < P; k++) if (de[k] === 1 && kinds[k] === 'continuous') cnt++;
      if (cnt > best) (best = cnt), (t = j);
    }
    if (t < 0 || best < 3) continue;
    const rng = Rng.create(seed);
    const graphs = [{ graph: g, weight: 0.4 }];
    for (let k = 1; k < GRAPHS; k++) graphs.push({ graph: perturb(g, rng.stream(k)), weight: 0.6 / (GRAPHS - 1) });
    // Outcome: the continuous descendant of t with the most ancestors in the true graph (a deep node).
    const de = descendants(g, t);
    let y = -1;
    let depth = -1;
    for (let j = 0; j < P; j++) {
      if (de[j] !== 1 || kinds[j] !== 'continuous') continue;
      let a = 0;
      for (let i = 0; i < P; i++) if (descendants(g, i)[j] === 1) a++;
      if (a > depth) (depth = a), (y = j);
    }
    // Segment variable: continuous, a non-descendant of t in every graph.
    let s = -1;
    for (let j = 0; j < P && s < 0; j++) {
      if (j === t || kinds[j] !== 'continuous') continue;
      if (graphs.every((w) => descendants(w.graph, t)[j] === 0)) s = j;
    }
    if (y < 0 || s < 0) continue;
    const t0 = performance.now();
    const model = fitModel(ds.frame, { names: g.names, graphs }, { family: 'mlp', referenceRows: ROWS, seed });
    return { model, treatment: g.names[t], outcome: g.names[y], segmentVar: g.names[s], fitSeconds: (performance.now() - t0) / 1000 };
  }
}

/**
 * Approximate floating-point operations of one simulation of `arms` arms: one evaluation per
 * distinct counterfactual column (the simulation memoises columns shared by graphs; the keys of
 * its memo name the mechanism evaluated). MLP: h·(2·nIn + 2) for the hidden layer, h for tanh
 * (counted as one flop, conservative), 2h + 3 for output and noise; linear/logistic/softmax:
 * 2·(nIn + 1)·k + 3.
 */
function simulationFlops(model: CompiledModel, t: number, y: number, armValues: readonly number[]): number {
  const arms = armValues.map((a) => resolveArm(model, t, a));
  const scratch = simulationScratch(model);
  const out = new Float64Array(arms.length * model.nReference);
  const memo = arms.map(() => new Map<string, Float64Array>());
  for (let g = 0; g < model.nGraphs; g++) simulateArms(model, g, t, y, 0, arms, scratch, out, memo);
  // Each arm simulates only the rows whose treatment it changes (counterfactual.ts).
  const R = model.nReference;
  const tCol = model.referenceValues.subarray(t * R, (t + 1) * R);
  let f = 0;
  for (let a = 0; a < memo.length; a++) {
    const mm = memo[a];
    let rows = 0;
    for (let r = 0; r < R; r++) if (tCol[r] !== armValues[a]) rows++;
    for (const key of mm.keys()) {
      const k0 = key.startsWith('y:') ? key.slice(2) : key;
      const m = Number.parseInt(k0, 10);
      if (!Number.isInteger(m) || (key.startsWith('y:') && !k0.includes('('))) continue;
      const row = m * MECH_STRIDE;
      const nIn = model.mechTable[row + MECH_N_IN];
      const h = model.mechTable[row + MECH_HIDDEN];
      const k = model.mechTable[row + MECH_N_OUT];
      f += rows * (h > 0 ? h * (2 * nIn + 2) + h + 2 * h + 3 : 2 * (nIn + 1) * Math.max(1, k) + 3);
    }
  }
  return f;
}

function referenceFlops(): number {
  const n = 4096;
  const a = new Float64Array(n).map((_, i) => i * 1e-3);
  const b = new Float64Array(n).map((_, i) => 1 - i * 1e-4);
  const c = new Float64Array(n);
  let reps = 0;
  // CPU time, like the simulation figure it is compared with.
  const t0 = cpuMs();
  while (cpuMs() - t0 < 500) {
    for (let k = 0; k < 100; k++) for (let i = 0; i < n; i++) c[i] = c[i] * 0.999 + a[i] * b[i];
    reps += 100;
  }
  const secs = (cpuMs() - t0) / 1000;
  if (c[7] === 42) console.log('');
  return (reps * n * 3) / secs;
}

function main(): void {
  console.log(`bench:query — ${P}-node nonlinear model (MLP mechanisms), ${GRAPHS} graphs, ${ROWS} reference rows`);
  const { model, treatment, outcome, segmentVar, fitSeconds } = buildModel();
  console.log(`  fitted in ${fitSeconds.toFixed(1)} s: treatment "${treatment}" (4 levels), outcome "${outcome}", segments on "${segmentVar}"; ${model.nMechanisms} mechanisms, R = ${model.nReference}`);
  const t = model.names.indexOf(treatment);
  const y = model.names.indexOf(outcome);
  const R = model.nReference;
  const vals = model.referenceValues.subarray(model.names.indexOf(segmentVar) * R, (model.names.indexOf(segmentVar) + 1) * R);
  const sorted = Float64Array.from(vals).sort();
  const q = (p: number) => sorted[Math.floor(p * (R - 1))];

  const ITER = 60;
  const cold: number[] = [];
  const coldCpu: number[] = [];
  for (let i = 0; i < ITER + 5; i++) {
    const cache = new EffectCache(model);
    const c0 = cpuMs();
    const t0 = performance.now();
    estimateEffect(cache, { treatment, outcome, arm: 1, reference: 0 });
    if (i >= 5) (cold.push(performance.now() - t0), coldCpu.push(cpuMs() - c0));
  }
  // The same cold queries without the cross-check (simulation, intervals from Monte Carlo and graph uncertainty only).
  const coldNoCc: number[] = [];
  const upNoCc: number[] = [];
  for (let i = 0; i < ITER + 5; i++) {
    const c0 = cpuMs();
    estimateEffect(new EffectCache(model), { treatment, outcome, arm: 1, reference: 0, crossCheck: false });
    const c1 = cpuMs();
    upliftTable(new EffectCache(model), { treatment, outcome, arms: [1, 2, 3], reference: 0, by: { variable: segmentVar, bins: 9 }, better: 'higher', crossCheck: false });
    if (i >= 5) (coldNoCc.push(c1 - c0), upNoCc.push(cpuMs() - c1));
  }
  const warmCache = new EffectCache(model);
  const first = estimateEffect(warmCache, { treatment, outcome, arm: 1, reference: 0 });
  // How many nuisance fits the cross-check needed: one per distinct adjustment set used, against
  // one per distinct optimal set had every graph used its own.
  const usedSets = new Set(first.perGraph.filter((g) => g.crossCheck).map((g) => g.adjustment.join(',')));
  const ownSets = new Set<string>();
  for (let g = 0; g < model.nGraphs; g++) ownSets.add(graphAdjustment(model, g, t, y).names.join(','));
  const shared = first.perGraph.filter((g) => g.adjustmentKind === 'shared').length;
  const warm: number[] = [];
  const warmCpu: number[] = [];
  for (let i = 0; i < ITER * 5; i++) {
    const lo = q((i % 10) / 20);
    const hi = q(0.5 + (i % 10) / 20);
    const c0 = cpuMs();
    const t0 = performance.now();
    estimateEffect(warmCache, { treatment, outcome, arm: 1, reference: 0, segment: { conditions: [{ variable: segmentVar, range: [lo, hi] }] } });
    warm.push(performance.now() - t0);
    warmCpu.push(cpuMs() - c0);
  }
  const upliftQuery = { treatment, outcome, arms: [1, 2, 3], reference: 0, by: { variable: segmentVar, bins: 9 }, better: 'higher' as const, costs: [0.1, 0.2, 0.3] };
  const upCold: number[] = [];
  const upColdCpu: number[] = [];
  for (let i = 0; i < ITER + 5; i++) {
    const cache = new EffectCache(model);
    const c0 = cpuMs();
    const t0 = performance.now();
    const tab = upliftTable(cache, upliftQuery);
    if (i >= 5) (upCold.push(performance.now() - t0), upColdCpu.push(cpuMs() - c0));
    if (i === 0 && tab.rows.length !== 9) console.log(`  note: ${tab.rows.length} non-empty segments`);
  }
  const upCache = new EffectCache(model);
  upliftTable(upCache, upliftQuery);
  const upWarm: number[] = [];
  const upWarmCpu: number[] = [];
  for (let i = 0; i < ITER; i++) {
    const c0 = cpuMs();
    const t0 = performance.now();
    upliftTable(upCache, upliftQuery);
    upWarm.push(performance.now() - t0);
    upWarmCpu.push(cpuMs() - c0);
  }
  // Simulation-only rate (no cross-check): 4 arms per graph on fresh caches.
  const flops = simulationFlops(model, t, y, [1, 2, 3, 0]);
  const simTimes: number[] = [];
  for (let i = 0; i < 40; i++) {
    const cache = new EffectCache(model);
    const c0 = cpuMs();
    cache.outcomes(treatment, outcome, [1, 2, 3, 0]);
    simTimes.push(cpuMs() - c0);
  }
  const simRate = flops / (pct(simTimes, 0.5) / 1000);
  const refRate = referenceFlops();

  const res = {
    nodes: P,
    graphs: GRAPHS,
    reference_rows: R,
    cold_ate_p50_ms: +pct(cold, 0.5).toFixed(3),
    cold_ate_p99_ms: +pct(cold, 0.99).toFixed(3),
    warm_segment_p50_ms: +pct(warm, 0.5).toFixed(3),
    warm_segment_p99_ms: +pct(warm, 0.99).toFixed(3),
    uplift_p50_ms: +pct(upCold, 0.5).toFixed(3),
    uplift_p99_ms: +pct(upCold, 0.99).toFixed(3),
    uplift_warm_p50_ms: +pct(upWarm, 0.5).toFixed(3),
    uplift_warm_p99_ms: +pct(upWarm, 0.99).toFixed(3),
    cold_ate_cpu_p50_ms: +pct(coldCpu, 0.5).toFixed(3),
    warm_segment_cpu_p50_ms: +pct(warmCpu, 0.5).toFixed(3),
    uplift_cpu_p50_ms: +pct(upColdCpu, 0.5).toFixed(3),
    uplift_warm_cpu_p50_ms: +pct(upWarmCpu, 0.5).toFixed(3),
    cold_ate_no_crosscheck_cpu_p50_ms: +pct(coldNoCc, 0.5).toFixed(3),
    uplift_no_crosscheck_cpu_p50_ms: +pct(upNoCc, 0.5).toFixed(3),
    load_average_1min: +loadavg()[0].toFixed(2),
    simulation_gflops: +(simRate / 1e9).toFixed(3),
    reference_gflops: +(refRate / 1e9).toFixed(3),
    flops_ratio: +(simRate / refRate).toFixed(3),
    crosscheck_adjustment_sets: usedSets.size,
    graphs_own_optimal_sets: ownSets.size,
    graphs_sharing_a_set: shared,
  };
  const table = [
    '| query | wall p50 ms | wall p99 ms | CPU p50 ms | target p50 |',
    '|---|---|---|---|---|',
    `| cold ATE (fresh cache, incl. AIPW cross-check) | ${res.cold_ate_p50_ms} | ${res.cold_ate_p99_ms} | ${res.cold_ate_cpu_p50_ms} | ≤ 30 |`,
    `| warm segment (CATE) | ${res.warm_segment_p50_ms} | ${res.warm_segment_p99_ms} | ${res.warm_segment_cpu_p50_ms} | ≤ 2 |`,
    `| uplift 9 segments × 3 arms, cold (one simulation pass) | ${res.uplift_p50_ms} | ${res.uplift_p99_ms} | ${res.uplift_cpu_p50_ms} | ≤ 30 |`,
    `| uplift 9 segments × 3 arms, warm | ${res.uplift_warm_p50_ms} | ${res.uplift_warm_p99_ms} | ${res.uplift_warm_cpu_p50_ms} | |`,
    `| cold ATE, crossCheck: false | | | ${res.cold_ate_no_crosscheck_cpu_p50_ms} | |`,
    `| uplift cold, crossCheck: false | | | ${res.uplift_no_crosscheck_cpu_p50_ms} | |`,
  ].join('\n');
  console.log('');
  console.log(table);
  console.log(`load average (1 min) during the run: ${res.load_average_1min} on ${availableParallelism()} cores`);
  console.log(`\nsimulation kernel ${res.simulation_gflops} GFLOP/s vs reference loop ${res.reference_gflops} GFLOP/s: ratio ${res.flops_ratio}`);
  mkdirSync('bench/results', { recursive: true });
  writeFileSync('bench/results/query.json', JSON.stringify(res, null, 2) + '\n');

  updateSection(
    'docs/benchmarks.md',
    '## Queries',
    [
      `Command: \`npm run bench:query\` (one process; figures from the last run; load average ${res.load_average_1min} on ${availableParallelism()} cores during the run, so wall times include waiting for a core — the CPU-time column is this process's own user+system time).`,
      '',
      `${P}-node nonlinear model (random MLP mechanisms from src/core/synthetic, MLP family fitted), ${GRAPHS} graphs (the true DAG at weight 0.4 and 9 perturbed DAGs), ${R} reference rows; 4-level categorical treatment.`,
      '',
      table,
      '',
      `Cross-check: cross-fitted AIPW (2 folds) per distinct adjustment set. The ${res.graphs} graphs have ${res.graphs_own_optimal_sets} distinct optimal sets; ${res.graphs_sharing_a_set} graphs reuse a more probable graph's set that is valid in them too, so the ATE needs ${res.crosscheck_adjustment_sets} sets' nuisance fits (one logistic propensity per contrasted arm and one outcome regression per arm, on each fold). Each arm simulates only the rows whose treatment it changes (the others keep their observed outcome, by consistency). The logistic fits take one pass over the rows per Newton iteration (objective, gradient and Hessian together, the Hessian reused near the optimum) and the second fold starts from the first's solution. Before these changes (one set per graph, a separate objective pass per iteration, every row simulated) the same cold ATE took 38.7 ms and the cold uplift 85.8 ms at load 1.65. The host's speed varies over a day (its reference loop below ran at 1.8–1.9 GFLOP/s in the fast state, 0.8–1.4 in the slow one) and within a run (a steady loop of cold uplifts switches between two levels about 1.5× apart for seconds at a time, with no compilation or collection at the switch), so compare runs by the reference-loop figure and interleave them. Simulation kernel (scm/mlp-row-kernel.ts): an MLP hidden unit's pre-activation is split by parent — parents that keep their observed values contribute a table computed once per (mechanism, parent roles) on all reference rows and shared by every arm and graph, the treatment under a set arm adds one number per unit, and only counterfactual parents are summed per changed row, fused with the activation. The logistic passes sum four columns per sweep and run over a level indicator's rows only; graphs with identical simulated outcomes share their segment sums; the normal CDF no longer allocates per iteration. Results are unchanged up to floating-point reassociation. Runs of the previous code (main at d8354cf) and this one, interleaved three times on the slow host at 04:16–04:18 UTC (reference loop 0.78–1.16 GFLOP/s, load 1.1–1.6; CPU p50, before → after): cold uplift 48.2 / 50.4 / 55.5 → 25.7 / 31.8 / 30.1 ms, the same without cross-check 27.5 / 23.2 / 32.3 → 13.9 / 15.8 / 15.6, cold ATE 20.7 / 17.1 / 24.7 → 10.7 / 14.7 / 16.7, warm uplift 3.9 / 5.7 / 6.0 → 3.0 / 3.4 / 2.4, warm segment 0.25 / 0.22 / 0.28 → 0.13 / 0.19 / 0.21. A steady loop of cold uplifts in isolation runs at 20–23 ms CPU on that host (31–33 in its slower spells): the cross-check's 24 one-vs-rest logistic fits (about 100 passes, their exp and log per row) are now the largest part, then the MLP activations (about 10⁶ per uplift).`,
      '',
      `Simulation kernel (CPU time, distinct counterfactual columns only): ${res.simulation_gflops} GFLOP/s against ${res.reference_gflops} GFLOP/s for a tight multiply-add loop over Float64Arrays (3 flops per element, CPU time): ratio ${res.flops_ratio} (the MLP activation counted as one flop; each distinct column is counted as its whole mechanism on the changed rows, while the kernel now computes the parts from unchanged parents once for all arms and graphs, so this is an equivalent rate, above 1 × the reference loop when those parts are large). JSON: bench/results/query.json.`,
    ].join('\n'),
  );
}


main();
