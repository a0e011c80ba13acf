/**
 * Background knowledge, a hard constraint for every learner.
 * Tiers: a variable may not cause one in an earlier tier. Forbidden and required edges by name.
 */
export interface Knowledge {
  /** Ordered groups of variable names; variables not listed are unconstrained by tiers. */
  readonly tiers?: readonly (readonly string[])[];
  readonly forbidden?: ReadonlyArray<readonly [string, string]>;
  readonly required?: ReadonlyArray<readonly [string, string]>;
}

/** Knowledge resolved against a variable order: n×n 0/1 matrices, row-major, [i*n+j] for i→j. */
export interface CompiledKnowledge {
  readonly n: number;
  readonly names: readonly string[];
  /** 1 where i→j may not appear (explicitly forbidden, or against the tiers). */
  readonly forbidden: Uint8Array;
  /** 1 where i→j must appear. */
  readonly required: Uint8Array;
  /** Tier of each node (-1 when the node is in no tier). */
  readonly tierOf: Int32Array;
}

/** Contradictory or malformed knowledge; `edges` names the offending edges. */
export class KnowledgeError extends RangeError {
  constructor(
    message: string,
    readonly edges: ReadonlyArray<readonly [string, string]> = [],
  ) {
    super(message);
    this.name = 'KnowledgeError';
  }
}

export function compileKnowledge(names: readonly string[], k: Knowledge = {}): CompiledKnowledge {
  const n = names.length;
  const index = new Map(names.map((nm, i) => [nm, i] as const));
  const idx = (name: string, where: string): number => {
    const i = index.get(name);
    if (i === undefined) throw new KnowledgeError(`${where} names unknown variable "${name}"; known: ${names.join(', ')}`);
    return i;
  };
  const tierOf = new Int32Array(n).fill(-1);
  (k.tiers ?? []).forEach((tier, t) => {
    for (const name of tier) {
      const i = idx(name, `tier ${t + 1}`);
      if (tierOf[i] !== -1) throw new KnowledgeError(`variable "${name}" is listed in tier ${tierOf[i] + 1} and tier ${t + 1}`);
      tierOf[i] = t;
    }
  });
  const forbidden = new Uint8Array(n * n);
  const required = new Uint8Array(n * n);
  for (let i = 0; i < n; i++) {
    forbidden[i * n + i] = 1;
    for (let j = 0; j < n; j++) if (tierOf[i] >= 0 && tierOf[j] >= 0 && tierOf[i] > tierOf[j]) forbidden[i * n + j] = 1;
  }
  const explicitForbidden = new Uint8Array(n * n);
  for (const [a, b] of k.forbidden ?? []) {
    const i = idx(a, `forbidden edge ${a}→${b}`);
    const j = idx(b, `forbidden edge ${a}→${b}`);
    forbidden[i * n + j] = 1;
    explicitForbidden[i * n + j] = 1;
  }
  const against: Array<[string, string]> = [];
  const clash: Array<[string, string]> = [];
  for (const [a, b] of k.required ?? []) {
    const i = idx(a, `required edge ${a}→${b}`);
    const j = idx(b, `required edge ${a}→${b}`);
    if (i === j) throw new KnowledgeError(`required edge ${a}→${b} is a self-loop`, [[a, b]]);
    required[i * n + j] = 1;
    if (explicitForbidden[i * n + j]) clash.push([a, b]);
    else if (forbidden[i * n + j]) against.push([a, b]);
  }
  if (clash.length > 0) {
    throw new KnowledgeError(`edges both required and forbidden: ${fmt(clash)}; remove one of the two`, clash);
  }
  if (against.length > 0) {
    throw new KnowledgeError(
      `required edges point from a later tier to an earlier one: ${fmt(against)}; move a variable to another tier or drop the edge`,
      against,
    );
  }
  const cycle = findCycle(n, required);
  if (cycle) {
    const edges = cycle.map((v, t) => [names[v], names[cycle[(t + 1) % cycle.length]]] as [string, string]);
    throw new KnowledgeError(`required edges form a cycle: ${fmt(edges)}; a causal graph cannot contain a cycle, drop one of them`, edges);
  }
  return { n, names, forbidden, required, tierOf };
}

/** True when i→j is allowed by the knowledge (not forbidden). */
export function allowed(k: CompiledKnowledge, i: number, j: number): boolean {
  return k.forbidden[i * k.n + j] === 0;
}

function fmt(edges: ReadonlyArray<readonly [string, string]>): string {
  return edges.map(([a, b]) => `${a}→${b}`).join(', ');
}

/** A directed cycle in the 0/1 adjacency, as the list of its nodes, or null. */
function findCycle(n: number, adj: Uint8Array): number[] | null {
  const state = new Uint8Array(n); // 0 new, 1 on stack, 2 done
  const stack: number[] = [];
  const visit = (u: number): number[] | null => {
    state[u] = 1;
    stack.push(u);
    for (let v = 0; v < n; v++) {
      if (!adj[u * n + v]) continue;
      if (state[v] === 1) return stack.slice(stack.indexOf(v));
      if (state[v] === 0) {
        const c = visit(v);
        if (c) return c;
      }
    }
    stack.pop();
    state[u] = 2;
    return null;
  };
  for (let u = 0; u < n; u++) {
    if (state[u] === 0) {
      const c = visit(u);
      if (c) return c;
    }
  }
  return null;
}
