/**
 * Discovery benchmark: `npm run bench:discovery [-- --quick]`.
 *
 * Per configuration and learner: median over seeds of SHD, adjacency F1, orientation F1 and
 * seconds, beside the R²-sort-and-regress baseline (bench/baselines/r2-sort-regress.ts) and
 * the empty graph. Simulated data are standardised before learning (Reisach, Seiler &
 * Weichwald 2021). Also the Sachs et al. (2005) protein data and three speed runs.
 * Writes bench/results/discovery.json and prints a markdown table for docs/benchmarks.md.
 */
import { readFileSync, writeFileSync, mkdirSync } from 'node:fs';
import { execSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { makeFrame, type Frame } from '../src/core/frame/frame.js';
import { standardise } from '../src/core/frame/standardise.js';
import { edgeScores } from '../src/core/graph/index.js';
import { emptyGraph, graphFromEdges, type Graph } from '../src/core/graph/graph.js';
import { learn } from '../src/core/discovery/learn.js';
import { availableLearners } from '../src/core/discovery/registry.js';
import { runBootstrap } from '../src/core/discovery/bootstrap.js';
import { generateDataset, type SyntheticConfig } from '../src/core/synthetic/index.js';
import { r2SortRegress } from './baselines/r2-sort-regress.js';
import { Rng } from '../src/core/random/rng.js';
import { distanceCorrelationTest } from '../src/core/stats/distance-correlation.js';
import { anmDirection } from '../src/core/discovery/anm-direction.js';

const here = dirname(fileURLToPath(import.meta.url));
const quick = process.argv.includes('--quick');
const only = (() => {
  const i = process.argv.indexOf('--only');
  return i >= 0 ? process.argv[i + 1].split(',') : null;
})();
const seeds = quick ? [1, 2] : [1, 2, 3, 4, 5];
const available = availableLearners();

interface Config {
  readonly id: string;
  readonly label: string;
  readonly data: SyntheticConfig;
  readonly learners: readonly string[];
}

const configs: Config[] = [
  {
    id: 'mlp-er20',
    label: 'nonlinear MLP, ER d=20, 40 edges, n=2000, Gaussian noise',
    data: { graph: 'er', nodes: 20, expectedEdges: 40, rows: 2000, mechanism: 'mlp', noise: 'gaussian' },
    learners: ['cam', 'mlp-notears', 'pc', 'linear-notears', 'direct-lingam', 'auto'],
  },
  {
    id: 'smooth-er10',
    // Noise variance 0.5: inside the range used for GP-mechanism data by Lachapelle et al. 2020 (from memory).
    label: 'random smooth (RFF-GP), ER d=10, 40 edges, n=1000, Gaussian noise sd 0.71',
    data: { graph: 'er', nodes: 10, expectedEdges: 40, rows: 1000, mechanism: 'smooth', noise: 'gaussian', noiseScale: Math.SQRT1_2 },
    learners: ['cam', 'mlp-notears', 'pc', 'linear-notears', 'direct-lingam', 'auto'],
  },
  {
    id: 'linear-uniform-er20',
    label: 'linear, uniform noise, ER d=20, 40 edges, n=2000',
    data: { graph: 'er', nodes: 20, expectedEdges: 40, rows: 2000, mechanism: 'linear', noise: 'uniform' },
    learners: ['direct-lingam', 'linear-notears', 'pc', 'auto'],
  },
];

interface Record {
  config: string;
  learner: string;
  shd: number;
  adj_f1: number;
  orient_f1: number;
  seconds: number;
  /** CPU seconds (user + system) of the run: what the learner cost, whatever the machine's load. */
  cpu_seconds: number;
  seeds: number;
  edges?: number;
  /** For 'auto': the learner it chose on each seed. */
  chose?: string[];
  error?: string;
}

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

function edgeCount(g: Graph): number {
  let e = 0;
  for (let i = 0; i < g.n; i++) for (let j = 0; j < g.n; j++) if (g.adj[i * g.n + j] && (i < j || !g.adj[j * g.n + i])) e++;
  return e;
}

/** CPU seconds of this process (all threads): a load-robust companion to wall-clock seconds. */
function cpuSeconds(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
}

function runOne(learner: string, frame: Frame, seed: number): { graph: Graph; seconds: number; cpu: number; chose?: string } {
  const t0 = performance.now();
  const c0 = cpuSeconds();
  let graph: Graph;
  let chose: string | undefined;
  if (learner === 'r2-sort-regress') graph = r2SortRegress(frame);
  else if (learner === 'empty') graph = emptyGraph(frame.columns.map((c) => c.name));
  else {
    const res = learn(frame, {}, { learner: learner as 'pc', seed });
    graph = res.graph;
    if (learner === 'auto') chose = res.learner;
  }
  return { graph, seconds: (performance.now() - t0) / 1000, cpu: cpuSeconds() - c0, chose };
}

const records: Record[] = [];
const log = (s: string) => process.stderr.write(s + '\n');
const load = () => execSync('uptime').toString().trim();
const loadBefore = load();
log(`start: ${loadBefore}`);

for (const cfg of configs) {
  if (only && !only.includes(cfg.id)) continue;
  const data = seeds.map((s) => generateDataset(cfg.data, 1000 + s));
  const learners = [...cfg.learners.filter((l) => l === 'auto' || available.has(l as 'pc')), 'r2-sort-regress', 'empty'];
  for (const learner of learners) {
    const shd: number[] = [];
    const adj: number[] = [];
    const ori: number[] = [];
    const sec: number[] = [];
    const cpu: number[] = [];
    let error: string | undefined;
    const chose: string[] = [];
    for (let k = 0; k < seeds.length; k++) {
      try {
        const { graph, seconds, cpu: cs, chose: c } = runOne(learner, data[k].frame, seeds[k]);
        cpu.push(cs);
        if (c) chose.push(c);
        const sc = edgeScores(graph, data[k].graph);
        shd.push(sc.shd);
        adj.push(sc.adjF1);
        ori.push(sc.orientF1);
        sec.push(seconds);
      } catch (e) {
        error = (e as Error).message;
        break;
      }
    }
    const rec: Record = error
      ? { config: cfg.id, learner, shd: NaN, adj_f1: NaN, orient_f1: NaN, seconds: NaN, cpu_seconds: NaN, seeds: 0, error }
      : { config: cfg.id, learner, shd: median(shd), adj_f1: median(adj), orient_f1: median(ori), seconds: median(sec), cpu_seconds: median(cpu), seeds: seeds.length };
    if (chose.length) rec.chose = chose;
    records.push(rec);
    log(`${cfg.id} ${learner}: ${JSON.stringify(rec)}`);
  }
}

// Sachs et al. (2005): CD3/CD28 observational condition, 853 rows, log-transformed then standardised.
const sachs: { [learner: string]: { shd: number; edges: number } } = {};
interface Visibility {
  alpha: number;
  permutations: number;
  visible: number;
  shd_floor: number;
  edges: Array<{ edge: string; dcor: number; p: number }>;
}
let sachsVisibility: Visibility | undefined;
/** Where the Sachs orientations come from: the ensemble's edges and a pairwise direction test. */
interface Orientation {
  /** Adjacencies in at least half the replicates, in their more frequent direction. */
  ensemble: Array<{ edge: string; p_adjacent: number; p_direction: number; verdict: 'consensus' | 'reversed' | 'not in consensus' }>;
  /** Pairwise additive-noise direction (HSIC of residual vs regressor) on each visible consensus edge. */
  anm: Array<{ edge: string; agrees: boolean; hsic_forward: number; hsic_backward: number }>;
}
let sachsOrientation: Orientation | undefined;
// The nonlinear learner `auto` picks for nonlinear data (auto.ts): cam, else mlp-notears.
const nonlinearLearner = available.has('cam') ? 'cam' : available.has('mlp-notears') ? 'mlp-notears' : null;
/** The Sachs et al. (2005) CD3/CD28 rows, log-transformed then standardised, and the 20-edge consensus graph. */
function loadSachs(): { names: string[]; frame: Frame; truthEdges: Array<[string, string]>; truth: Graph } {
  const dir = join(here, '..', '..', 'shared', 'data', 'sachs2005');
  const root = process.env.SACHS_DIR ?? (tryRead(join(dir, 'sachs2005_cd3cd28_observational.csv')) ? dir : '/work/shared/data/sachs2005');
  const rows = readFileSync(join(root, 'sachs2005_cd3cd28_observational.csv'), 'utf8').trim().split('\n');
  const names = rows[0].split(',');
  const cols = names.map(() => new Float64Array(rows.length - 1));
  for (let r = 1; r < rows.length; r++) {
    const v = rows[r].split(',');
    for (let c = 0; c < names.length; c++) cols[c][r - 1] = Math.log(Number(v[c]));
  }
  const frame = standardise(makeFrame(names.map((name, c) => ({ name, kind: 'continuous' as const, values: cols[c] })))).frame;
  const truthEdges = readFileSync(join(root, 'sachs2005_ground_truth_edges_20.csv'), 'utf8')
    .trim()
    .split('\n')
    .slice(1)
    .map((l) => l.split(',') as [string, string]);
  const truth = graphFromEdges(names, truthEdges);
  return { names, frame, truthEdges, truth };
}

if (!only || only.includes('sachs')) {
  const { names, frame, truthEdges, truth } = loadSachs();
  const learners = [...['pc', 'direct-lingam', 'linear-notears', 'mlp-notears', 'cam'].filter((l) => available.has(l as 'pc')), 'auto', 'r2-sort-regress', 'empty'];
  for (const learner of learners) {
    try {
      const { graph, seconds, cpu, chose } = runOne(learner, frame, 1);
      const sc = edgeScores(graph, truth);
      const rec: Record = { config: 'sachs', learner, shd: sc.shd, adj_f1: sc.adjF1, orient_f1: sc.orientF1, seconds, cpu_seconds: cpu, seeds: 1, edges: edgeCount(graph) };
      if (chose) rec.chose = [chose];
      records.push(rec);
      sachs[learner] = { shd: sc.shd, edges: rec.edges as number };
      log(`sachs ${learner}: ${JSON.stringify(rec)}`);
    } catch (e) {
      records.push({ config: 'sachs', learner, shd: NaN, adj_f1: NaN, orient_f1: NaN, seconds: NaN, cpu_seconds: NaN, seeds: 0, error: (e as Error).message });
    }
  }
  // The product's own answer: a bootstrap ensemble (bootstrap.ts), summarised as the edges found
  // in at least half the replicates, each in its more frequent direction.
  if (nonlinearLearner) {
    const t0 = performance.now();
    const c0 = cpuSeconds();
    const set = await runBootstrap(frame, {}, { learner: nonlinearLearner as 'cam' }, { replicates: 20, seed: 1, threads: 2 });
    const graph = majorityGraph(set.edgeProbability, names);
    const sc = edgeScores(graph, truth);
    const learner = `${nonlinearLearner} ensemble (20 replicates, edges in ≥ half)`;
    const rec: Record = { config: 'sachs', learner, shd: sc.shd, adj_f1: sc.adjF1, orient_f1: sc.orientF1, seconds: (performance.now() - t0) / 1000, cpu_seconds: cpuSeconds() - c0, seeds: 1, edges: edgeCount(graph) };
    records.push(rec);
    sachs[learner] = { shd: sc.shd, edges: rec.edges as number };
    log(`sachs ${learner}: ${JSON.stringify(rec)}`);
    const truthSet = new Set(truthEdges.map(([a, b]) => `${a}→${b}`));
    const d = names.length;
    const p = set.edgeProbability;
    const ensemble: Orientation['ensemble'] = [];
    for (let i = 0; i < d; i++) {
      for (let j = i + 1; j < d; j++) {
        const adj = p[i * d + j] + p[j * d + i];
        if (adj < 0.5) continue;
        const [a, b, pd] = p[i * d + j] >= p[j * d + i] ? [names[i], names[j], p[i * d + j]] : [names[j], names[i], p[j * d + i]];
        const verdict = truthSet.has(`${a}→${b}`) ? 'consensus' : truthSet.has(`${b}→${a}`) ? 'reversed' : 'not in consensus';
        ensemble.push({ edge: `${a}→${b}`, p_adjacent: +adj.toFixed(3), p_direction: +pd.toFixed(3), verdict });
      }
    }
    ensemble.sort((x, y) => y.p_adjacent - x.p_adjacent || y.p_direction - x.p_direction);
    sachsOrientation = { ensemble, anm: [] };
  }
  // How many consensus edges the data show at all: a distance-correlation permutation test
  // (Székely, Rizzo & Bakirov 2007) finds linear and nonlinear dependence alike. A learner
  // whose edges rest on dependence misses every consensus edge whose endpoints look
  // independent, so 20 minus the visible ones is a floor on its SHD.
  const rng = Rng.create(1);
  const col = (v: string) => frame.columns[names.indexOf(v)].values;
  const tests = truthEdges.map(([a, b]) => ({ edge: `${a}→${b}`, ...distanceCorrelationTest(col(a), col(b), 199, rng) }));
  const visible = tests.filter((t) => t.p <= 0.01);
  sachsVisibility = { alpha: 0.01, permutations: 199, visible: visible.length, shd_floor: truthEdges.length - visible.length, edges: tests.map((t) => ({ edge: t.edge, dcor: +t.dcor.toFixed(3), p: +t.p.toFixed(3) })) };
  log(`sachs visibility: ${visible.length} of ${truthEdges.length} consensus edges show dependence (p ≤ 0.01)`);
  // A second, model-free opinion on the directions of the visible edges: the pairwise
  // additive-noise-model test (Hoyer et al. 2009; anm-direction.ts), on the log values.
  const anm = visible.map((t) => {
    const [a, b] = t.edge.split('→');
    const r = anmDirection(col(a), col(b));
    return { edge: t.edge, agrees: r.direction === 'forward', hsic_forward: +r.hsicForward.toExponential(3), hsic_backward: +r.hsicBackward.toExponential(3) };
  });
  sachsOrientation = { ensemble: sachsOrientation?.ensemble ?? [], anm };
}

// Sachs over 5 seeds of the nonlinear learner and of its ensemble (part 'sachs-seeds'): how much
// of a one-point difference on these 853 rows is the seed's.
interface SachsSeed {
  seed: number;
  single_shd: number;
  ensemble_shd: number;
  ensemble_edges: number;
}
let sachsSeeds: SachsSeed[] | undefined;
if (nonlinearLearner && !quick && (!only || only.includes('sachs-seeds'))) {
  const { names, frame, truth } = loadSachs();
  sachsSeeds = [];
  for (const seed of [1, 2, 3, 4, 5]) {
    const single = edgeScores(learn(frame, {}, { learner: nonlinearLearner as 'cam', seed }).graph, truth).shd;
    const set = await runBootstrap(frame, {}, { learner: nonlinearLearner as 'cam' }, { replicates: 20, seed, threads: 2 });
    const graph = majorityGraph(set.edgeProbability, names);
    sachsSeeds.push({ seed, single_shd: single, ensemble_shd: edgeScores(graph, truth).shd, ensemble_edges: edgeCount(graph) });
    log(`sachs seed ${seed}: ${JSON.stringify(sachsSeeds.at(-1))}`);
  }
}

/** Edges with probability (either direction) ≥ 0.5, each in its more frequent direction. */
function majorityGraph(p: Float64Array, names: readonly string[]): Graph {
  const d = names.length;
  const edges: Array<[string, string]> = [];
  for (let i = 0; i < d; i++) {
    for (let j = i + 1; j < d; j++) {
      if (p[i * d + j] + p[j * d + i] < 0.5) continue;
      edges.push(p[i * d + j] >= p[j * d + i] ? [names[i], names[j]] : [names[j], names[i]]);
    }
  }
  return graphFromEdges(names, edges);
}

function tryRead(p: string): boolean {
  try {
    readFileSync(p);
    return true;
  } catch {
    return false;
  }
}

// Speed runs.
interface Speed {
  run: string;
  learner: string;
  seconds: number;
  /** CPU seconds of the process, all threads together. */
  cpu_seconds: number;
  limit: number;
  note?: string;
}
const speed: Speed[] = [];
if (!only || only.includes('speed')) {
  if (nonlinearLearner) {
    const ds = generateDataset(configs[0].data, 77);
    const { seconds, cpu } = runOne(nonlinearLearner, ds.frame, 1);
    speed.push({ run: 'one nonlinear replicate, d=20, n=2000', learner: nonlinearLearner, seconds, cpu_seconds: cpu, limit: 60 });
    log(JSON.stringify(speed[speed.length - 1]));
  }
  if (available.has('linear-notears')) {
    const ds = generateDataset({ graph: 'er', nodes: 100, expectedEdges: 200, rows: 5000, mechanism: 'linear', noise: 'gaussian' }, 78);
    const { graph, seconds, cpu } = runOne('linear-notears', ds.frame, 1);
    const sc = edgeScores(graph, ds.graph);
    speed.push({ run: 'linear learner, ER d=100 (200 edges), n=5000', learner: 'linear-notears', seconds, cpu_seconds: cpu, limit: 60, note: `shd ${sc.shd}` });
    log(JSON.stringify(speed[speed.length - 1]));
  }
}
// The 20-replicate ensemble is its own part ('ensemble'): on a busy machine it can take long, so
// it logs each finished replicate, and on SIGTERM/SIGINT it records how far it got and stops.
if (nonlinearLearner && !quick && (!only || only.includes('ensemble'))) {
  const ds = generateDataset(configs[0].data, 79);
  const t0 = performance.now();
  const c0 = cpuSeconds();
  const partial: Speed = { run: '20-replicate nonlinear ensemble, d=20, n=2000, 2 threads', learner: nonlinearLearner, seconds: NaN, cpu_seconds: NaN, limit: 600, note: 'not finished: 0 of 20 replicates' };
  speed.push(partial);
  const stop = (): void => {
    partial.seconds = (performance.now() - t0) / 1000;
    partial.cpu_seconds = cpuSeconds() - c0;
    log(`stopped: ${JSON.stringify(partial)}`);
    finish();
    process.exit(0);
  };
  process.once('SIGTERM', stop);
  process.once('SIGINT', stop);
  const set = await runBootstrap(ds.frame, {}, { learner: nonlinearLearner as 'cam' }, {
    replicates: 20,
    seed: 1,
    threads: 2,
    onReplicate: (done, total) => {
      partial.note = `not finished: ${done} of ${total} replicates after ${((performance.now() - t0) / 1000).toFixed(0)} s wall, ${(cpuSeconds() - c0).toFixed(0)} CPU s`;
      log(partial.note);
    },
  });
  partial.seconds = (performance.now() - t0) / 1000;
  partial.cpu_seconds = cpuSeconds() - c0;
  partial.note = `${set.graphs.length} distinct DAGs`;
  process.removeAllListeners('SIGTERM');
  process.removeAllListeners('SIGINT');
  log(JSON.stringify(partial));
}
finish();

function finish(): void {
const loadAfter = load();
log(`end: ${loadAfter}`);

interface Run {
  generated: string;
  only: string[] | null;
  load_start: string;
  load_end: string;
}
interface Results {
  quick: boolean;
  seeds: number[];
  runs: Run[];
  records: Record[];
  sachs: { [learner: string]: { shd: number; edges: number } };
  sachs_visibility?: Visibility;
  sachs_orientation?: Orientation;
  sachs_seeds?: SachsSeed[];
  speed: Speed[];
}

// With --only, merge into the existing results of the same kind (quick or full), replacing
// what this run measured, so the full benchmark can be run in parts on a busy machine.
const outFile = join(here, 'results', 'discovery.json');
const run: Run = { generated: new Date().toISOString(), only, load_start: loadBefore, load_end: loadAfter };
let results: Results = { quick, seeds, runs: [run], records, sachs, sachs_visibility: sachsVisibility, sachs_orientation: sachsOrientation, sachs_seeds: sachsSeeds, speed };
if (only) {
  try {
    const prev = JSON.parse(readFileSync(outFile, 'utf8')) as Results;
    if (prev.quick === quick && Array.isArray(prev.runs)) {
      const ran = new Set(records.map((r) => r.config));
      results = {
        quick,
        seeds,
        runs: [...prev.runs, run],
        records: [...prev.records.filter((r) => !ran.has(r.config)), ...records],
        sachs: only.includes('sachs') ? sachs : prev.sachs,
        sachs_visibility: only.includes('sachs') ? sachsVisibility : prev.sachs_visibility,
        sachs_orientation: only.includes('sachs') ? sachsOrientation : prev.sachs_orientation,
        sachs_seeds: only.includes('sachs-seeds') ? sachsSeeds : prev.sachs_seeds,
        speed: [...prev.speed.filter((p) => !speed.some((q) => q.run === p.run)), ...speed],
      };
    }
  } catch {
    // no previous results: keep this run alone
  }
}
const order = [...configs.map((c) => c.id), 'sachs'];
results.records.sort((a, b) => order.indexOf(a.config) - order.indexOf(b.config));
mkdirSync(join(here, 'results'), { recursive: true });
writeFileSync(outFile, JSON.stringify(results, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2) + '\n');

const fmt = (v: number | null, d = 2) => (typeof v === 'number' && Number.isFinite(v) ? v.toFixed(d) : '—');
const lines: string[] = [];
lines.push(`Median over ${results.seeds.length} seeds (${results.quick ? 'quick run' : 'full run'}); simulated data standardised before learning. Machine load (\`uptime\`) per part of the run — 2 cores shared with other work, so wall seconds are pessimistic; CPU s is the process's own CPU time:`);
lines.push('');
for (const r of results.runs) lines.push(`- ${r.only ? r.only.join(', ') : 'all'}: start \`${r.load_start}\`, end \`${r.load_end}\``);
lines.push('');
lines.push('| configuration | learner | SHD | adjacency F1 | orientation F1 | seconds | CPU s |');
lines.push('| --- | --- | ---: | ---: | ---: | ---: | ---: |');
for (const r of results.records) {
  const label = r.config === 'sachs' ? `Sachs et al. 2005 (853 rows, 20-edge consensus; learned edges ${r.edges ?? '—'})` : (configs.find((c) => c.id === r.config)?.label ?? r.config);
  lines.push(
    `| ${label} | ${r.learner}${r.chose ? ` (chose ${[...new Set(r.chose)].join('/')})` : ''}${r.error ? ` (failed: ${r.error.slice(0, 60)})` : ''} | ${fmt(r.shd, r.config === 'sachs' ? 0 : 1)} | ${fmt(r.adj_f1)} | ${fmt(r.orient_f1)} | ${fmt(r.seconds, 1)} | ${fmt(r.cpu_seconds, 1)} |`,
  );
}
const vis = results.sachs_visibility;
if (vis) {
  lines.push('');
  lines.push(
    `Sachs consensus edges whose endpoints show any dependence in these 853 rows (distance-correlation permutation test, ${vis.permutations} permutations, p ≤ ${vis.alpha}): ${vis.visible} of ${vis.visible + vis.shd_floor} — so a learner whose edges rest on dependence scores SHD ≥ ${vis.shd_floor}. Not visible: ${vis.edges.filter((e) => e.p > vis.alpha).map((e) => `${e.edge} (dCor ${e.dcor.toFixed(2)}, p ${e.p.toFixed(2)})`).join(', ')}.`,
  );
}
const ori = results.sachs_orientation;
if (ori) {
  if (ori.ensemble.length) {
    lines.push('');
    lines.push(`Sachs, the ${nonlinearLearner ?? 'nonlinear'} ensemble's adjacencies (in at least half of 20 replicates), each in its more frequent direction, against the consensus:`);
    lines.push('');
    lines.push('| edge | P(adjacent) | P(this direction) | consensus |');
    lines.push('| --- | ---: | ---: | --- |');
    for (const e of ori.ensemble) lines.push(`| ${e.edge} | ${e.p_adjacent.toFixed(2)} | ${e.p_direction.toFixed(2)} | ${e.verdict} |`);
  }
  if (ori.anm.length) {
    const agree = ori.anm.filter((e) => e.agrees);
    lines.push('');
    lines.push(
      `Pairwise additive-noise direction test (anm-direction.ts, Hoyer et al. 2009) on the ${ori.anm.length} visible consensus edges: agrees with the consensus on ${agree.length} (${agree.map((e) => e.edge).join(', ')}); prefers the reverse of ${ori.anm.filter((e) => !e.agrees).map((e) => e.edge).join(', ')}.`,
    );
  }
}
const ss = results.sachs_seeds;
if (ss && ss.length) {
  const med = (xs: number[]) => xs.slice().sort((a, b) => a - b)[xs.length >> 1];
  lines.push('');
  lines.push(
    `Sachs over seeds ${ss.map((x) => x.seed).join(', ')} (\`--only sachs-seeds\`): single ${nonlinearLearner ?? 'nonlinear'} run SHD ${ss.map((x) => x.single_shd).join(' / ')} (median ${med(ss.map((x) => x.single_shd))}); 20-replicate ensemble SHD ${ss.map((x) => x.ensemble_shd).join(' / ')} (median ${med(ss.map((x) => x.ensemble_shd))}), with ${ss.map((x) => x.ensemble_edges).join(' / ')} edges.`,
  );
}
if (results.speed.length) {
  lines.push('');
  lines.push('| speed run | learner | seconds (wall) | CPU s (all threads) | limit (wall) | note |');
  lines.push('| --- | --- | ---: | ---: | ---: | --- |');
  for (const sp of results.speed) lines.push(`| ${sp.run} | ${sp.learner} | ${fmt(sp.seconds, 1)} | ${fmt(sp.cpu_seconds, 1)} | ${sp.limit} | ${sp.note ?? ''} |`);
}
console.log(lines.join('\n'));
}
