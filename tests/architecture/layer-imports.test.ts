/**
 * The layers of DESIGN.md §3 (api → app → jobs → store → core): an import may only point to
 * the same layer or one below. This reads every src/**\/*.ts file and checks each relative
 * import (static, re-export, and `import('…')` in type positions), so an upward import fails
 * here rather than in review.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const SRC = resolve(dirname(fileURLToPath(import.meta.url)), '../../src');

/** Rank of each layer: a file may import a module of equal or lower rank. */
const LAYER_RANK: Record<string, number> = { core: 0, store: 1, jobs: 2, app: 3, api: 4 };

/**
 * Modules outside the five layers. `errors/` and `config.ts` are shared leaves (api and app
 * use them) and must not import any layer; `main.ts` and `demo/` are entry points on top.
 */
const LEAVES = new Set(['errors', 'config.ts']);
const ENTRIES = new Set(['main.ts', 'demo']);

interface Edge {
  from: string;
  to: string;
  line: number;
}

function tsFiles(dir: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) out.push(...tsFiles(p));
    else if (e.name.endsWith('.ts')) out.push(p);
  }
  return out;
}

/**
 * Specifiers of `import … from`, `export … from`, `import '…'` and `import('…')`. The
 * statement forms are anchored at a line start and spelled out (default, `{…}`, `* as x`) so
 * that text such as `from '${name}'` inside a message is not taken for an import.
 */
const BINDINGS = String.raw`(?:type\s+)?(?:\{[^}]*\}|\*(?:\s+as\s+\w+)?|\w+(?:\s*,\s*(?:\{[^}]*\}|\*\s+as\s+\w+))?)`;
const SPECIFIER = new RegExp(
  String.raw`^\s*(?:import|export)\s+${BINDINGS}\s+from\s*['"]([^'"]+)['"]|^\s*import\s*['"]([^'"]+)['"]|\bimport\s*\(\s*['"]([^'"]+)['"]\s*\)`,
  'gm',
);

/** Every import edge in source text; `from` and `to` are paths relative to src/. */
function importEdges(file: string, text: string): { specifier: string; to: string | null; line: number }[] {
  const edges: { specifier: string; to: string | null; line: number }[] = [];
  for (const m of text.matchAll(SPECIFIER)) {
    const specifier = m[1] ?? m[2] ?? m[3];
    const line = text.slice(0, m.index).split('\n').length;
    const to = specifier.startsWith('.') ? relative(SRC, resolve(dirname(file), specifier)) : null;
    edges.push({ specifier, to, line });
  }
  return edges;
}

/** The top-level part of a path relative to src/: a layer, a leaf or an entry. */
function area(rel: string): string {
  return rel.split(sep)[0].replace(/\.js$/, '.ts');
}

/** Why an edge breaks the layering, or null when it is allowed. */
function violation(fromRel: string, toRel: string): string | null {
  const from = area(fromRel);
  const to = area(toRel);
  if (toRel.startsWith('..')) return `imports outside src/ (${toRel})`;
  if (from === to || ENTRIES.has(from)) return null;
  if (ENTRIES.has(to)) return `imports the entry point ${to}`;
  if (LEAVES.has(from)) return `${from} is a shared leaf and imports ${to}`;
  if (LEAVES.has(to)) return from === 'core' ? `core imports ${to} (the engine knows nothing of the service)` : null;
  const rf = LAYER_RANK[from];
  const rt = LAYER_RANK[to];
  if (rf === undefined || rt === undefined) return `unknown area ${rf === undefined ? from : to}: add it to this test and DESIGN.md`;
  return rt > rf ? `${from} imports upward into ${to}` : null;
}

function scan(): { edges: Edge[]; packagesInCore: Edge[] } {
  const edges: Edge[] = [];
  const packagesInCore: Edge[] = [];
  for (const file of tsFiles(SRC)) {
    const rel = relative(SRC, file);
    for (const e of importEdges(file, readFileSync(file, 'utf8'))) {
      if (e.to !== null) edges.push({ from: rel, to: e.to, line: e.line });
      else if (area(rel) === 'core' && !e.specifier.startsWith('node:')) packagesInCore.push({ from: rel, to: e.specifier, line: e.line });
    }
  }
  return { edges, packagesInCore };
}

describe('layering of src/', () => {
  const { edges, packagesInCore } = scan();

  it('finds the imports it is meant to check', () => {
    // A scanner that silently matched nothing would pass every rule below.
    expect(edges.length).toBeGreaterThan(500);
    expect(edges.some((e) => area(e.from) === 'api' && area(e.to) === 'app')).toBe(true);
    expect(edges.some((e) => area(e.from) === 'store' && area(e.to) === 'core')).toBe(true);
  });

  it('has no import that points up the layers', () => {
    const bad = edges
      .map((e) => ({ e, why: violation(e.from, e.to) }))
      .filter((x) => x.why !== null)
      .map(({ e, why }) => `${e.from}:${e.line} → ${e.to}: ${why}`);
    expect(bad).toEqual([]);
  });

  it('keeps the engine free of packages (core uses node: built-ins at most)', () => {
    expect(packagesInCore.map((e) => `${e.from}:${e.line} → ${e.to}`)).toEqual([]);
  });
});

describe('the layering rule itself', () => {
  it('refuses an upward import and an import of an entry point, and allows downward ones', () => {
    expect(violation(join('store', 'datasets-repository.ts'), join('app', 'datasets', 'types.js'))).toMatch(/upward/);
    expect(violation(join('core', 'scm', 'x.ts'), join('jobs', 'y.js'))).toMatch(/upward/);
    expect(violation(join('app', 'x.ts'), 'main.js')).toMatch(/entry point/);
    expect(violation(join('core', 'x.ts'), join('errors', 'y.js'))).toMatch(/core imports/);
    expect(violation(join('errors', 'x.ts'), join('app', 'y.js'))).toMatch(/shared leaf/);
    expect(violation(join('api', 'x.ts'), join('core', 'y.js'))).toBeNull();
    expect(violation(join('app', 'x.ts'), join('errors', 'y.js'))).toBeNull();
    expect(violation('main.ts', join('api', 'app.js'))).toBeNull();
    expect(violation('main.ts', join('demo', 'run-demo.js'))).toBeNull();
  });

  it('sees type-only, re-export and inline type imports', () => {
    const file = join(SRC, 'store', 'x.ts');
    const text = [
      "import type { A } from '../app/a.js';",
      "export { B } from '../api/b.js';",
      'let c: import("../jobs/c.js").C;',
      "import '../core/side-effect.js';",
      'import {',
      '  D,',
      '  type E,',
      "} from '../store/d.js';",
      'import F, { G } from "./f.js";',
      "const message = `estimated from '${name}'`;",
    ].join('\n');
    expect(importEdges(file, text).map((e) => e.to)).toEqual([
      join('app', 'a.js'),
      join('api', 'b.js'),
      join('jobs', 'c.js'),
      join('core', 'side-effect.js'),
      join('store', 'd.js'),
      join('store', 'f.js'),
    ]);
  });
});
