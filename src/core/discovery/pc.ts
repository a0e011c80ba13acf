import type { Frame } from '../frame/frame.js';
import { meekInPlace } from '../graph/meek-rules.js';
import type { Rng } from '../random/rng.js';
import { createCiTest, type CiTest } from './ci-tests.js';
import type { CompiledKnowledge } from './knowledge.js';
import type { Learner, LearnResult } from './learner.js';
import { applyColliders, orientVStructures, type VStructureRule } from './pc-orientation.js';
import { pcSkeleton } from './pc-skeleton.js';

/**
 * PC (Spirtes, Glymour & Scheines 2000, "Causation, Prediction, and Search", 2nd ed.) in
 * its order-independent form PC-stable (Colombo & Maathuis 2014, JMLR 15): skeleton by
 * conditional independence tests with frozen adjacency sets (pc-skeleton.ts), v-structures
 * by an order-independent rule (pc-orientation.ts), then Meek's rules R1–R4 (Meek 1995)
 * to the CPDAG. Tests: Fisher z for continuous variables, nested-regression
 * likelihood-ratio tests when binary or categorical variables take part (ci-tests.ts).
 *
 * Tiers also restrict the conditioning sets (tiered PC, pc-skeleton.ts): the adjacency of
 * X and Y is never tested given a variable of a tier later than both, since such a variable
 * can be an ancestor of neither; this keeps true edges that a later common effect (or a
 * near-cancellation through one) would make look absent, and saves tests.
 *
 * Knowledge is a hard constraint throughout: a pair forbidden both ways is never
 * adjacent; a required edge is never removed and is oriented as required; an edge one of
 * whose directions is forbidden (explicitly or by the tiers: an edge between tiers points
 * from the earlier to the later tier) is oriented the allowed way before the v-structures,
 * v-structures never override it, and it is re-imposed after Meek's rules (which are sound
 * with background knowledge, Meek 1995), repeating until nothing changes.
 *
 * Test errors can make v-structures and Meek's rules close a directed cycle, which no DAG
 * explains. A collider whose arms would close one with stronger colliders is skipped; edges
 * Meek's rules still put on a cycle are left undirected (never one the knowledge orients).
 * The notes count both. With a perfect test neither happens (pc.test.ts checks that PC
 * with a d-separation oracle returns exactly the CPDAG of the true DAG).
 */
export interface PcOptions {
  /**
   * Significance level of every test; an edge is removed when p > alpha. Default 0.01:
   * with samples in the thousands 0.05 keeps too many spurious dependencies (common
   * practice is 0.01–0.05).
   */
  readonly alpha: number;
  /** Largest conditioning set tested. Default Infinity (until no pair has enough neighbours). */
  readonly maxCondSize: number;
  /** Rule deciding v-structures, both order-independent. Default 'majority'. */
  readonly vStructureRule: VStructureRule;
  /**
   * Condition only on variables the tiers allow to be ancestors of the tested pair (never
   * on one in a tier later than both). Default true; false gives plain PC-stable, which
   * uses the tiers for orientation only. No effect without tiers.
   */
  readonly tierRestricted: boolean;
}

export const PC_DEFAULTS: PcOptions = { alpha: 0.01, maxCondSize: Infinity, vStructureRule: 'majority', tierRestricted: true };

function validate(o: Partial<PcOptions>): PcOptions {
  const v: PcOptions = {
    alpha: o.alpha ?? PC_DEFAULTS.alpha,
    maxCondSize: o.maxCondSize ?? PC_DEFAULTS.maxCondSize,
    vStructureRule: o.vStructureRule ?? PC_DEFAULTS.vStructureRule,
    tierRestricted: o.tierRestricted ?? PC_DEFAULTS.tierRestricted,
  };
  if (typeof v.tierRestricted !== 'boolean') throw new TypeError(`pc: tierRestricted must be a boolean, got ${String(v.tierRestricted)}`);
  if (!(v.alpha > 0 && v.alpha < 1)) throw new RangeError(`pc: alpha must lie in (0, 1), got ${v.alpha}`);
  if (!(v.maxCondSize >= 0)) throw new RangeError(`pc: maxCondSize must be ≥ 0, got ${v.maxCondSize}`);
  if (v.vStructureRule !== 'majority' && v.vStructureRule !== 'conservative') {
    throw new RangeError(`pc: vStructureRule must be 'majority' or 'conservative', got ${String(v.vStructureRule)}`);
  }
  return v;
}

/** The PC-stable learner; deterministic (it draws no random numbers). */
export const pc: Learner<PcOptions> = {
  name: 'pc',
  defaults: PC_DEFAULTS,
  checkOptions(options: Partial<PcOptions>): void {
    validate(options);
  },
  learn(frame: Frame, knowledge: CompiledKnowledge, options: Partial<PcOptions>, _rng: Rng): LearnResult {
    const o = validate(options);
    const names = frame.columns.map((c) => c.name);
    const n = names.length;
    if (knowledge.n !== n || knowledge.names.some((nm, i) => nm !== names[i])) {
      throw new RangeError(`pc: knowledge was compiled for [${knowledge.names.join(', ')}], the frame has [${names.join(', ')}]`);
    }
    for (const c of frame.columns) {
      for (let r = 0; r < c.values.length; r++) {
        if (Number.isNaN(c.values[r])) throw new RangeError(`pc: column "${c.name}" has missing values; impute first (learn.ts does this)`);
      }
    }
    const test = createCiTest(frame);
    const { adj, notes } = pcWithTest(names, test, knowledge, o);
    notes.unshift(
      `PC-stable with ${test.family === 'fisher-z' ? 'Fisher z tests' : 'Fisher z and likelihood-ratio tests (mixed data)'}, alpha ${o.alpha}, ${test.computed} tests`,
    );
    return {
      learner: 'pc',
      kind: 'cpdag',
      graph: { n, names, adj },
      notes,
      missing: { scheme: 'none', rowsAffected: 0, cellsAffected: 0 },
    };
  },
};

/**
 * PC-stable on any conditional independence test (the data-free core; a d-separation oracle
 * in place of `test` must give exactly the CPDAG of the true DAG). Returns the PDAG marks.
 */
export function pcWithTest(
  names: readonly string[],
  test: Pick<CiTest, 'pValue'>,
  knowledge: CompiledKnowledge,
  o: PcOptions,
): { adj: Uint8Array; notes: string[] } {
  const n = names.length;
  const tiered = o.tierRestricted && knowledge.tierOf.some((t) => t >= 0);
  const skel = pcSkeleton(n, test, knowledge, o.alpha, o.maxCondSize, tiered);
  const pdag = skel.adj.slice();
  imposeKnowledge(pdag, n, knowledge);
  const { report: rep, colliders } = orientVStructures(skel, pdag, test, knowledge, o.alpha, o.maxCondSize, o.vStructureRule, tiered);
  const forced = new Uint8Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (i !== j && (knowledge.required[i * n + j] === 1 || (knowledge.forbidden[j * n + i] === 1 && knowledge.forbidden[i * n + j] === 0))) forced[i * n + j] = 1;
    }
  }
  const adj = applyColliders(pdag, n, colliders, (marks) => closeUnderMeek(marks, names, knowledge), forced, rep);
  const notes = [
    tiered ? 'tier-restricted conditioning: no variable of a tier later than both tested variables' : 'conditioning sets not restricted by tiers',
    `conditioning sets up to size ${skel.maxLevel < 0 ? 0 : skel.maxLevel}`,
    `v-structures (${o.vStructureRule} rule): ${rep.colliders} colliders, ${rep.ambiguous} ambiguous triples, ` +
      `${rep.conflicts} conflicting edges left undirected, ${rep.vetoed} orientations refused by the knowledge, ` +
      `${rep.cyclic} colliders skipped as they would close a directed cycle, ` +
      `${rep.unoriented} edges left undirected as Meek's rules put them on a directed cycle`,
  ];
  return { adj, notes };
}

/**
 * Makes the marks `pdag` agree with the knowledge: required edges directed, an edge with one
 * forbidden direction turned the other way, an edge forbidden both ways removed.
 * Returns true when a mark changed.
 */
export function imposeKnowledge(pdag: Uint8Array, n: number, k: CompiledKnowledge): boolean {
  let changed = false;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const ij = i * n + j;
      const ji = j * n + i;
      if (pdag[ij] === 0 && pdag[ji] === 0) continue;
      let a = pdag[ij];
      let b = pdag[ji];
      if (k.required[ij] === 1) {
        a = 1;
        b = 0;
      } else if (k.required[ji] === 1) {
        a = 0;
        b = 1;
      } else {
        if (k.forbidden[ij] === 1 && k.forbidden[ji] === 1) {
          a = 0;
          b = 0;
        } else if (k.forbidden[ij] === 1) {
          a = 0;
          b = 1;
        } else if (k.forbidden[ji] === 1) {
          a = 1;
          b = 0;
        }
      }
      if (a !== pdag[ij] || b !== pdag[ji]) {
        pdag[ij] = a;
        pdag[ji] = b;
        changed = true;
      }
    }
  }
  return changed;
}

/** Meek's rules, then the knowledge again, until neither changes anything. */
function closeUnderMeek(pdag: Uint8Array, names: readonly string[], k: CompiledKnowledge): Uint8Array {
  const n = names.length;
  const adj = pdag.slice();
  for (let round = 0; round <= n * n; round++) {
    meekInPlace(adj, n);
    if (!imposeKnowledge(adj, n, k)) break;
  }
  return adj;
}
