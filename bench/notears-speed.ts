/**
 * Development benchmark for the two continuous-optimisation learners (prints seconds):
 *   linear-notears at d=100, n=5000 (target ≤ 60 s on one core)
 *   mlp-notears    at d=20,  n=2000 (target ≤ 60 s on one core)
 * Data: ER DAGs (2d expected edges for the linear case, 40 for the MLP case), standardised.
 * Usage: npx tsx bench/notears-speed.ts [linear|mlp]   (both by default)
 */
import { loadavg } from 'node:os';
import { makeFrame, type Frame } from '../src/core/frame/frame.js';
import { Rng } from '../src/core/random/rng.js';
import { compileKnowledge } from '../src/core/discovery/knowledge.js';
import { linearNotears } from '../src/core/discovery/notears-linear.js';
import { mlpNotears } from '../src/core/discovery/notears-mlp.js';

/** Random DAG: each pair i<j (in a random order) is an edge with probability p. */
export function erDag(d: number, edges: number, rng: Rng): Uint8Array {
  const p = edges / ((d * (d - 1)) / 2);
  const order = Array.from({ length: d }, (_, i) => i);
  rng.shuffle(order);
  const adj = new Uint8Array(d * d);
  for (let a = 0; a < d; a++) for (let b = a + 1; b < d; b++) if (rng.uniform() < p) adj[order[a] * d + order[b]] = 1;
  return adj;
}

function topo(d: number, adj: Uint8Array): number[] {
  const indeg = new Int32Array(d);
  for (let t = 0; t < d * d; t++) if (adj[t]) indeg[t % d]++;
  const out: number[] = [];
  const q: number[] = [];
  for (let j = 0; j < d; j++) if (indeg[j] === 0) q.push(j);
  while (q.length) {
    const u = q.shift()!;
    out.push(u);
    for (let v = 0; v < d; v++) if (adj[u * d + v] && --indeg[v] === 0) q.push(v);
  }
  return out;
}

function standardise(cols: Float64Array[]): void {
  for (const v of cols) {
    let m = 0;
    for (const x of v) m += x;
    m /= v.length;
    let s = 0;
    for (const x of v) s += (x - m) ** 2;
    s = Math.sqrt(s / v.length) || 1;
    for (let r = 0; r < v.length; r++) v[r] = (v[r] - m) / s;
  }
}

function toFrame(cols: Float64Array[]): Frame {
  return makeFrame(cols.map((values, j) => ({ name: `x${j}`, kind: 'continuous' as const, values })));
}

/** Linear Gaussian SEM, weights ±U(0.5, 2), unit noise, standardised. */
export function linearData(d: number, n: number, adj: Uint8Array, rng: Rng): Frame {
  const w = new Float64Array(d * d);
  for (let t = 0; t < d * d; t++) if (adj[t]) w[t] = (rng.uniform() < 0.5 ? -1 : 1) * (0.5 + 1.5 * rng.uniform());
  const cols = Array.from({ length: d }, () => new Float64Array(n));
  for (const j of topo(d, adj)) {
    const c = cols[j];
    for (let r = 0; r < n; r++) c[r] = rng.normal();
    for (let i = 0; i < d; i++) if (adj[i * d + j]) for (let r = 0; r < n; r++) c[r] += w[i * d + j] * cols[i][r];
  }
  standardise(cols);
  return toFrame(cols);
}

/** Random one-hidden-layer MLP mechanisms (100 sigmoid units, weights ±U(0.5, 2)), unit Gaussian noise, standardised. */
export function mlpData(d: number, n: number, adj: Uint8Array, rng: Rng, hidden = 100): Frame {
  const cols = Array.from({ length: d }, () => new Float64Array(n));
  for (const j of topo(d, adj)) {
    const pa: number[] = [];
    for (let i = 0; i < d; i++) if (adj[i * d + j]) pa.push(i);
    const c = cols[j];
    for (let r = 0; r < n; r++) c[r] = rng.normal();
    if (pa.length === 0) continue;
    const w1 = pa.map(() => Array.from({ length: hidden }, () => (rng.uniform() < 0.5 ? -1 : 1) * (0.5 + 1.5 * rng.uniform())));
    const w2 = Array.from({ length: hidden }, () => (rng.uniform() < 0.5 ? -1 : 1) * (0.5 + 1.5 * rng.uniform()));
    for (let r = 0; r < n; r++) {
      let y = 0;
      for (let k = 0; k < hidden; k++) {
        let z = 0;
        for (let p = 0; p < pa.length; p++) z += w1[p][k] * cols[pa[p]][r];
        y += w2[k] / (1 + Math.exp(-z));
      }
      c[r] += y;
    }
  }
  standardise(cols);
  return toFrame(cols);
}

/** SHD and orientation F1 of a DAG estimate against the truth. */
export function score(d: number, est: Uint8Array, truth: Uint8Array): { shd: number; orientF1: number; edges: number } {
  let shd = 0;
  let tp = 0;
  let ne = 0;
  let nt = 0;
  for (let i = 0; i < d; i++) {
    for (let j = 0; j < d; j++) {
      if (est[i * d + j]) ne++;
      if (truth[i * d + j]) nt++;
      if (est[i * d + j] && truth[i * d + j]) tp++;
      if (j <= i) continue;
      const e = est[i * d + j] ? 1 : est[j * d + i] ? 2 : 0;
      const t = truth[i * d + j] ? 1 : truth[j * d + i] ? 2 : 0;
      if (e !== t) shd++;
    }
  }
  const prec = ne ? tp / ne : 0;
  const rec = nt ? tp / nt : 0;
  return { shd, orientF1: prec + rec > 0 ? (2 * prec * rec) / (prec + rec) : 0, edges: ne };
}

/** CPU seconds (user + system) since `c0`: the learner's cost whatever the machine's load. */
function cpuSince(c0: NodeJS.CpuUsage): number {
  const u = process.cpuUsage(c0);
  return (u.user + u.system) / 1e6;
}

function run(which: string): void {
  console.log(`load average at start: ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
  if (which === 'linear' || which === 'all') {
    const d = 100;
    const rng = Rng.create(20261201);
    const truth = erDag(d, 2 * d, rng);
    const frame = linearData(d, 5000, truth, rng);
    const k = compileKnowledge(frame.columns.map((c) => c.name));
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    const res = linearNotears.learn(frame, k, {}, Rng.create(1));
    const sec = (performance.now() - t0) / 1000;
    const cpu = cpuSince(c0);
    const s = score(d, res.graph.adj, truth);
    console.log(`linear-notears d=100 n=5000: ${sec.toFixed(1)} s wall, ${cpu.toFixed(1)} s CPU  (SHD ${s.shd}, orientation F1 ${s.orientF1.toFixed(3)}, ${s.edges} edges)`);
    for (const note of res.notes) console.log(`  ${note}`);
  }
  if (which === 'mlp' || which === 'all') {
    const d = 20;
    const rng = Rng.create(20261202);
    const truth = erDag(d, 40, rng);
    const frame = mlpData(d, 2000, truth, rng);
    const k = compileKnowledge(frame.columns.map((c) => c.name));
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    const res = mlpNotears.learn(frame, k, {}, Rng.create(1));
    const sec = (performance.now() - t0) / 1000;
    const cpu = cpuSince(c0);
    const s = score(d, res.graph.adj, truth);
    console.log(`mlp-notears d=20 n=2000: ${sec.toFixed(1)} s wall, ${cpu.toFixed(1)} s CPU  (SHD ${s.shd}, orientation F1 ${s.orientF1.toFixed(3)}, ${s.edges} edges)`);
    for (const note of res.notes) console.log(`  ${note}`);
  }
}

if (process.argv[1] && process.argv[1].endsWith('notears-speed.ts')) run(process.argv[2] ?? 'all');
