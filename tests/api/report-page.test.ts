/**
 * The report page rendered from a real small fitted model: data generated from stated
 * equations, a fixed graph, effects and an uplift table from the engine (EffectCache), then
 * checks on the HTML — every node, every segment row, the recommended arm of the uplift
 * answer (and the analytically best arm), escaping of hostile names.
 *
 * Equations (n = 8000, seed 11):
 *   G ∈ {a, b, c} uniform;  W ~ N(0, 1);
 *   T ∈ {none, report, rebate}: softmax scores (0, 0.5·W, −0.5·W + 0.3·G);
 *   logit P(Y = 1) = −1 + β_T + γ_G with β = (0, 0.5, 1.2), γ = (0, 1.5, 3);
 *   M = Y + N(0, 1) (a descendant of the outcome).
 * Effects on P(Y = 1) by segment (expit differences, computed below from the equations), with
 * costs 0.07 (report) and 0.12 (rebate): a → rebate, b → rebate, c → none (no arm pays).
 */
import { writeFileSync } from 'node:fs';
import helmet from '@fastify/helmet';
import Fastify from 'fastify';
import { serializerCompiler, validatorCompiler, type ZodTypeProvider } from 'fastify-type-provider-zod';
import { cp, mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { installAuth } from '../../src/api/plugins/auth.js';
import { createAuthCache } from '../../src/app/keys/auth-cache.js';
import { installErrorHandler } from '../../src/api/plugins/error-handler.js';
import { REPORT_CSP, reportLinkRoutes, reportPageRoutes } from '../../src/api/routes/report-routes.js';
import { createKey, createWorkspaceWithAdminKey } from '../../src/app/keys/key-use-cases.js';
import type { ModelsService } from '../../src/app/models/models-service.js';
import { createQueriesService } from '../../src/app/queries/queries-service.js';
import { serialise } from '../../src/core/scm/serialise.js';
import { modelError } from '../../src/errors/model-errors.js';
import { createKeysRepository } from '../../src/store/keys-repository.js';
import { openDb } from '../../src/store/open-db.js';
import { createWorkspacesRepository } from '../../src/store/workspaces-repository.js';
import { pgliteTemplate } from './helpers/test-app.js';
import { resolveQuestion, type ReportData } from '../../src/app/reports/report-data.js';
import { graphReading } from '../../src/app/models/graph-reading.js';
import { diffGraphs } from '../../src/app/models/graph-views.js';
import { crossCheckMix } from '../../src/api/report/effects-section.js';
import { renderGraphSvg } from '../../src/api/report/graph-svg.js';
import { renderReport } from '../../src/api/report/render-report.js';
import { EffectCache, estimateEffect, upliftTable } from '../../src/core/effects/index.js';
import { makeFrame, type Frame } from '../../src/core/frame/frame.js';
import { graphFromEdges } from '../../src/core/graph/graph.js';
import { Rng } from '../../src/core/random/rng.js';
import { fitFixedGraph } from '../../src/core/scm/fit-model.js';
import type { CompiledModel } from '../../src/core/scm/compiled-model.js';
import type { VersionGraph } from '../../src/jobs/compute-tasks.js';

const expit = (x: number) => 1 / (1 + Math.exp(-x));
const BETA = [0, 0.5, 1.2];
const GAMMA = [0, 1.5, 3];
const COSTS = [0.07, 0.12];
const ARMS = ['none', 'report', 'rebate'];

/** Analytic per-segment effect of arm k (1, 2) against none on P(Y = 1). */
const truth = (g: number, k: number) => expit(-1 + BETA[k] + GAMMA[g]) - expit(-1 + GAMMA[g]);
/** Analytic best arm per segment with the costs (the reference when no arm's net value is positive). */
const bestArm = (g: number) => {
  let best = 'none';
  let val = 0;
  for (let k = 1; k <= 2; k++) {
    const v = truth(g, k) - COSTS[k - 1];
    if (v > val) (val = v), (best = ARMS[k]);
  }
  return best;
};

interface Names {
  G: string;
  W: string;
  T: string;
  Y: string;
  M: string;
  levelsG: string[];
}
const PLAIN: Names = { G: 'G', W: 'W', T: 'T', Y: 'Y', M: 'M', levelsG: ['a', 'b', 'c'] };

function frameOf(names: Names, n = 8000): Frame {
  const rng = Rng.create(11);
  const g = new Float64Array(n), w = new Float64Array(n), t = new Float64Array(n), y = new Float64Array(n), m = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    g[i] = rng.int(3);
    w[i] = rng.normal();
    const s = [0, 0.5 * w[i], -0.5 * w[i] + 0.3 * g[i]].map(Math.exp);
    const u = rng.uniform() * (s[0] + s[1] + s[2]);
    t[i] = u < s[0] ? 0 : u < s[0] + s[1] ? 1 : 2;
    y[i] = rng.uniform() < expit(-1 + BETA[t[i]] + GAMMA[g[i]]) ? 1 : 0;
    m[i] = y[i] + rng.normal();
  }
  return makeFrame([
    { name: names.G, kind: 'categorical', values: g, levels: names.levelsG },
    { name: names.W, kind: 'continuous', values: w },
    { name: names.T, kind: 'categorical', values: t, levels: ARMS },
    { name: names.Y, kind: 'binary', values: y },
    { name: names.M, kind: 'continuous', values: m },
  ]);
}

/** The version graph JSON the fit job stores (same construction as jobs/compute-tasks.ts). */
function versionGraph(model: CompiledModel, frame: Frame, edges: Array<[string, string]>): VersionGraph {
  const n = model.p;
  const out: Array<{ from: string; to: string; probability: number }> = [];
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (model.edgeProbability[i * n + j] > 0) out.push({ from: model.names[i], to: model.names[j], probability: model.edgeProbability[i * n + j] });
  return {
    nodes: frame.columns.map((c) => (c.levels ? { name: c.name, kind: c.kind, levels: [...c.levels] } : { name: c.name, kind: c.kind })),
    edges: out,
    graphs: [{ weight: 1, count: 1, edges }],
  };
}

/** Fit, answer, and assemble the page's data exactly as report-data.ts does after the service calls. */
function fixture(names: Names = PLAIN) {
  const frame = frameOf(names);
  const edges: Array<[string, string]> = [
    [names.G, names.T],
    [names.W, names.T],
    [names.G, names.Y],
    [names.T, names.Y],
    [names.Y, names.M],
  ];
  const list = [names.G, names.W, names.T, names.Y, names.M];
  const model = fitFixedGraph(frame, graphFromEdges(list, edges), { seed: 3 });
  const cache = new EffectCache(model);
  const graph = versionGraph(model, frame, edges);
  const spec = { treatment: names.T, outcome: names.Y, knowledge: { tiers: [[names.G, names.W], [names.T], [names.Y], [names.M]] }, learner: 'auto', replicates: 0, seed: 3, datasetId: 'ds-1', fixedGraph: { edges }, mechanisms: { family: 'linear', noise: 'empirical' } };
  const { question } = resolveQuestion(graph, spec, { costs: COSTS });
  if (!question) throw new Error('no question');
  const effects = question.arms.map((arm) => ({
    arm: String(arm),
    answer: { ok: true as const, value: estimateEffect(cache, { treatment: question.treatment, outcome: question.outcome, arm, reference: question.reference }) },
  }));
  const table = upliftTable(cache, { treatment: question.treatment, outcome: question.outcome, arms: question.arms, reference: question.reference, by: { cells: question.by }, better: question.better, costs: question.costs });
  const previousGraph: VersionGraph = { ...graph, edges: graph.edges.filter((e) => e.to !== names.M) };
  const data: ReportData = {
    model: { id: 'm-1', name: `${names.T} model` },
    version: {
      id: 'v-2',
      modelId: 'm-1',
      number: 2,
      jobId: 'j-2',
      spec,
      datasetBatches: [1, 2],
      rowCount: frame.nRows,
      graph,
      diagnostics: { learner: 'fixed', replicates: 0, distinctGraphs: 1, referenceRows: model.nReference, graphNotes: ['fixed graph given by the user'] },
      timings: { compileMs: 120, totalMs: 450 },
      createdAt: '2026-12-01T12:00:00.000Z',
    },
    graph,
    reading: graphReading(graph, 'fixed'),
    tiers: spec.knowledge.tiers,
    question,
    questionNote: null,
    effects,
    uplift: { ok: true, value: table },
    upliftNote: null,
    previous: { number: 1, diff: diffGraphs(previousGraph, graph) },
    linkExpiresAt: '2026-12-01T13:00:00.000Z',
  };
  return { data, table, model, names };
}

const attrs = (html: string, name: string): string[] => [...html.matchAll(new RegExp(`${name}="([^"]*)"`, 'g'))].map((m) => m[1]);
const unescape = (s: string) => s.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, '&');

describe('report page rendering', () => {
  const { data, table } = fixture();
  const html = renderReport(data);
  // REPORT_DUMP=/path/page.html writes the page for a look in a browser.
  if (process.env.REPORT_DUMP) writeFileSync(process.env.REPORT_DUMP, html);

  it('defaults: treatment, outcome, reference = first level, arms = the other levels, segments by G', () => {
    expect(data.question).toMatchObject({ treatment: 'T', outcome: 'Y', reference: 'none', arms: ['report', 'rebate'], by: ['G'], better: 'higher' });
  });

  it('an unknown treatment or a numeric one without arms gives a note instead of a question', () => {
    const spec = { treatment: 'T', outcome: 'Y' };
    expect(resolveQuestion(data.graph, spec, { treatment: 'nope' }).note).toMatch(/“nope” is not a variable of this model; choose one of: G, W, T, Y, M/);
    expect(resolveQuestion(data.graph, spec, { treatment: 'W' }).note).toMatch(/“W” is numeric; add \?arms=/);
    expect(resolveQuestion(data.graph, {}, {}).note).toMatch(/names no treatment and outcome/);
    // Segments default to the first discrete variable the treatment cannot affect.
    expect(resolveQuestion(data.graph, spec, {}).question?.by).toEqual(['G']);
  });

  it('draws every node once, marks treatment and outcome by tag and shape, and every edge with a <title>', () => {
    expect(attrs(html, 'data-node').sort()).toEqual(['G', 'M', 'T', 'W', 'Y']);
    expect(html).toMatch(/data-node="T" data-role="treatment"/);
    expect(html).toMatch(/data-node="Y" data-role="outcome"/);
    expect(html).toContain('>TREATMENT</text>');
    expect(html).toContain('>OUTCOME</text>');
    const svgEdges = [...html.matchAll(/<g class="edge" data-edge="([^"]*)"[^>]*><title>([^<]*)<\/title>/g)];
    expect(svgEdges.map((m) => m[1]).sort()).toEqual(['G→T', 'G→Y', 'T→Y', 'W→T', 'Y→M']);
    // Fixed graph: every edge has probability 1, so each shows a visible label "1.00".
    expect((html.match(/class="edge-label"[^>]*>1\.00</g) ?? []).length).toBe(5);
  });

  it('lays the tiers out as bands: every node of an earlier tier sits above every node of a later one', () => {
    const yOf = (name: string) => Number(new RegExp(`data-node="${name}"[^]*?<rect[^>]* y="([\\d.]+)"`).exec(html)![1]);
    const tiers = data.tiers!;
    for (let k = 0; k + 1 < tiers.length; k++) {
      expect(Math.max(...tiers[k].map(yOf))).toBeLessThan(Math.min(...tiers[k + 1].map(yOf)));
    }
  });

  it('has one uplift row per segment, whose recommended arm is the uplift answer’s — and the analytic best arm', () => {
    const rows = [...html.matchAll(/<tr data-segment="([^"]*)" data-recommended="([^"]*)">/g)].map((m) => ({ segment: unescape(m[1]), recommended: m[2] }));
    expect(rows.map((r) => r.segment)).toEqual(table.rows.map((r) => r.segment.name));
    expect(rows.map((r) => r.recommended)).toEqual(table.rows.map((r) => r.recommended));
    expect(rows.length).toBe(3);
    expect(table.rows.map((r) => r.recommended)).toEqual([0, 1, 2].map(bestArm));
    expect([0, 1, 2].map(bestArm)).toEqual(['rebate', 'rebate', 'none']);
  });

  it('prints each ATE with its interval and the weight-mixed cross-check, from the answer’s own fields', () => {
    for (const { arm, answer } of data.effects) {
      if (!answer.ok) throw new Error('refused');
      const e = answer.value;
      const row = new RegExp(`<tr data-arm="${arm}">([^]*?)</tr>`).exec(html)![1];
      const fmt = (x: number) => (x < 0 ? '\u2212' : '') + Number(Math.abs(x).toPrecision(3)).toString();
      expect(row).toContain(`${fmt(e.estimate)} [${fmt(e.lower)}, ${fmt(e.upper)}]`);
      const xc = crossCheckMix(e);
      expect(xc).not.toBeNull();
      expect(row).toContain(`<td class="num">${fmt(xc!)}</td>`);
      // One graph of weight 1: the mix is that graph's cross-check.
      expect(xc).toBe(e.perGraph[0].crossCheck!.estimate);
    }
    // The effects agree with the equations (averaged over G uniform) within 0.04.
    const ate = (k: number) => (truth(0, k) + truth(1, k) + truth(2, k)) / 3;
    const est = data.effects.map((x) => (x.answer.ok ? x.answer.value.estimate : NaN));
    expect(Math.abs(est[0] - ate(1))).toBeLessThan(0.04);
    expect(Math.abs(est[1] - ate(2))).toBeLessThan(0.04);
  });

  it('is self-contained: no script, no external URL, inline style, print and narrow-screen rules', () => {
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/\son[a-z]+=/i);
    expect(html).not.toMatch(/(src|href)="(https?:)?\/\//i);
    expect(html).not.toMatch(/<link\s/i);
    expect(html).toContain('@media print');
    expect(html).toContain('@media (max-width: 640px)');
    expect(html).toContain('overflow-x: auto');
  });

  it('shows provenance and the change since the previous version', () => {
    expect(html).toContain('batches 1, 2');
    expect(html).toContain('Compared with version 1');
    expect(html).toMatch(/<strong>Gained:<\/strong> Y → M \(100%\)/);
    expect(html).toContain('0.45 s in total');
  });

  it('says under the graph how to read its probabilities (here: a given graph, an assumption)', () => {
    const graphSection = html.slice(html.indexOf('id="graph"'), html.indexOf('</section>', html.indexOf('id="graph"')));
    expect(graphSection).toContain('Reading the probabilities');
    expect(graphSection).toContain('given with the model, not learned');
  });
});

describe('report page escaping', () => {
  it('escapes hostile variable names and levels everywhere', () => {
    const hostile: Names = {
      G: '<script>alert("g")</script>',
      W: 'w" onmouseover="alert(1)',
      T: "T'><img src=x onerror=alert(2)>",
      Y: 'Y & <b>bold</b>',
      M: 'M',
      levelsG: ['"><svg onload=alert(3)>', 'b', 'c'],
    };
    const { data } = fixture(hostile);
    const html = renderReport(data);
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toContain('<img');
    expect(html).not.toContain('<svg onload');
    expect(html).not.toContain('<b>bold');
    expect(html).not.toMatch(/\son(mouseover|error|load)="/i);
    expect(html).toContain('&lt;script&gt;alert(&quot;g&quot;)&lt;/script&gt;');
    expect(attrs(html, 'data-node').map(unescape).sort()).toEqual([hostile.G, hostile.W, hostile.T, hostile.Y, 'M'].sort());
    const segs = attrs(html, 'data-segment').map(unescape);
    expect(segs.length).toBe(3);
    expect(segs[0]).toContain(hostile.levelsG[0]);
  });
});

// ---------------------------------------------------------------------------------------------
// Routes: link minting under /v1 (real auth hook and keys on PGlite) and the public page, with
// the real queries service answering from the fixture's compiled model (serialised as a stored
// version would be) through a stand-in for the models service.

const WS_A = { id: '', read: '', admin: '' };
const MODEL_ID = '0b7a5f7e-2f4c-4f0e-9d1a-6a3c2b1e0f01';
const V1 = '0b7a5f7e-2f4c-4f0e-9d1a-6a3c2b1e0f11';
const V2 = '0b7a5f7e-2f4c-4f0e-9d1a-6a3c2b1e0f12';
const SECRET = 'route-test-secret-0123456789abcdef';

async function routeApp(clock: { now: number }) {
  const { fixture: fx } = { fixture };
  const { data, model } = fx();
  const bytes = serialise(model);
  const meta = (id: string, number: number) => ({ ...data.version, id, number, modelId: MODEL_ID });
  const calls: Array<{ fn: string; ws: string; ref?: string }> = [];
  const find = (ws: string, ref: string | undefined) => {
    if (ws !== WS_A.id) throw modelError('ERR_MODEL_NOT_FOUND', { id: MODEL_ID });
    if (ref === undefined || ref === 'current' || ref === '2' || ref === V2) return meta(V2, 2);
    if (ref === '1' || ref === V1) return meta(V1, 1);
    throw modelError('ERR_MODEL_VERSION_NOT_FOUND', { id: MODEL_ID, version: ref });
  };
  const models = {
    deps: { models: { artifact: async (ws: string, id: string) => (ws === WS_A.id && (id === V1 || id === V2) ? bytes : null) } },
    get: async (ws: string, id: string) => {
      calls.push({ fn: 'get', ws });
      if (ws !== WS_A.id || id !== MODEL_ID) throw modelError('ERR_MODEL_NOT_FOUND', { id });
      return { id: MODEL_ID, workspaceId: ws, datasetId: 'ds-1', name: data.model.name, spec: data.version.spec, currentVersionId: V2, createdAt: '', updatedAt: '' };
    },
    version: async (ws: string, id: string, ref?: string) => {
      calls.push({ fn: 'version', ws, ref });
      if (id !== MODEL_ID) throw modelError('ERR_MODEL_NOT_FOUND', { id });
      return find(ws, ref);
    },
    listVersions: async (ws: string) => [find(ws, V1), find(ws, V2)],
    diff: async (ws: string, _id: string, from: string, to: string) => {
      calls.push({ fn: 'diff', ws, ref: `${from}..${to}` });
      return { from: find(ws, from).number, to: find(ws, to).number, ...data.previous!.diff };
    },
  } as unknown as ModelsService;
  const queries = createQueriesService(models);
  const dir = await mkdtemp(join(tmpdir(), 'fulcrum-report-'));
  await cp(await pgliteTemplate(), dir, { recursive: true });
  const db = await openDb({ dataDir: dir });
  const deps = { db, keys: createKeysRepository(db), workspaces: createWorkspacesRepository(db) };
  const wa = await createWorkspaceWithAdminKey(deps, 'A');
  const wb = await createWorkspaceWithAdminKey(deps, 'B');
  WS_A.id = wa.workspaceId;
  WS_A.admin = wa.adminKey.key;
  WS_A.read = (await createKey(deps, wa.workspaceId, { name: 'reader', scopes: ['read'] })).key;

  const app = Fastify({ logger: false }).withTypeProvider<ZodTypeProvider>();
  app.setValidatorCompiler(validatorCompiler);
  app.setSerializerCompiler(serializerCompiler);
  installErrorHandler(app, { bodyLimit: 1 << 20 });
  // The app's global helmet CSP (allows same-origin scripts); the report page must replace it.
  await app.register(helmet, { contentSecurityPolicy: { directives: { defaultSrc: ["'self'"], scriptSrc: ["'self'"] } } });
  const opts = { models, queries, secret: SECRET, now: () => clock.now };
  await app.register(
    async (v1) => {
      installAuth(v1, createAuthCache(deps.keys));
      await v1.register(reportLinkRoutes, opts);
    },
    { prefix: '/v1' },
  );
  await app.register(reportPageRoutes, opts);
  await app.ready();
  return {
    app,
    calls,
    otherAdmin: wb.adminKey.key,
    close: async () => {
      await app.close();
      await db.close();
      await rm(dir, { recursive: true, force: true });
    },
  };
}

describe('report routes', () => {
  const clock = { now: Date.UTC(2026, 11, 1, 12, 0, 0) };
  let t: Awaited<ReturnType<typeof routeApp>>;
  beforeAll(async () => {
    t = await routeApp(clock);
  }, 60_000);
  afterAll(async () => t?.close());

  const mint = (key: string | null, version = 'current', body?: unknown) =>
    t.app.inject({
      method: 'POST',
      url: `/v1/models/${MODEL_ID}/versions/${version}/report-links`,
      headers: key ? { authorization: `Bearer ${key}` } : {},
      ...(body === undefined ? {} : { payload: body as object }),
    });

  it('a read key mints a link pinned to the version, 60 minutes by default; 7 days at most', async () => {
    const r = await mint(WS_A.read);
    expect(r.statusCode, r.body).toBe(201);
    const body = r.json();
    expect(body.model).toEqual({ id: MODEL_ID, version: 2, versionId: V2 });
    expect(body.url).toBe(`http://localhost:80${body.path}`);
    expect(Date.parse(body.expiresAt) - clock.now).toBe(60 * 60_000);
    const week = await mint(WS_A.read, '1', { expiresInMinutes: 7 * 24 * 60 });
    expect(week.statusCode).toBe(201);
    expect(Date.parse(week.json().expiresAt) - clock.now).toBe(7 * 24 * 3_600_000);
    expect((await mint(WS_A.read, '1', { expiresInMinutes: 7 * 24 * 60 + 1 })).statusCode).toBe(400);
    expect((await mint(WS_A.read, '1', { expiresInMinutes: 0 })).statusCode).toBe(400);
  });

  it('no key is 401; another workspace’s key is 404 (the model is not found there)', async () => {
    expect((await mint(null)).statusCode).toBe(401);
    const other = await mint(t.otherAdmin);
    expect(other.statusCode).toBe(404);
    expect(other.json().type).toBe('ERR_MODEL_NOT_FOUND');
  });

  it('the link opens the page without a key, under a CSP that forbids scripts and external loads', async () => {
    const { path } = (await mint(WS_A.read, '2')).json();
    t.calls.length = 0;
    const page = await t.app.inject({ method: 'GET', url: `${path}?costs=0.07,0.12&version=1` });
    expect(page.statusCode).toBe(200);
    expect(page.headers['content-type']).toBe('text/html; charset=utf-8');
    const csp = String(page.headers['content-security-policy']);
    expect(csp).toBe(REPORT_CSP);
    expect(csp).toContain("script-src 'none'");
    expect(csp).toContain("default-src 'none'");
    expect(page.headers['cache-control']).toBe('private, no-store');
    expect(page.headers['referrer-policy']).toBe('no-referrer');
    const html = page.body;
    expect(attrs(html, 'data-node').sort()).toEqual(['G', 'M', 'T', 'W', 'Y']);
    expect(attrs(html, 'data-recommended')).toEqual(['rebate', 'rebate', 'none']);
    // Every service call was for the workspace and version the token names (?version=1 is ignored).
    expect(t.calls.filter((c) => c.fn === 'version').every((c) => c.ws === WS_A.id && c.ref === V2)).toBe(true);
    expect(t.calls.find((c) => c.fn === 'diff')?.ref).toBe(`${V1}..${V2}`);
  });

  it('a refused question shows the service’s message on the page; a malformed parameter is 400', async () => {
    const { path } = (await mint(WS_A.read)).json();
    const bad = await t.app.inject({ method: 'GET', url: `${path}?arms=bonus` });
    expect(bad.statusCode).toBe(200);
    expect(bad.body).toMatch(/class="refused"[^]*bonus/);
    const desc = await t.app.inject({ method: 'GET', url: `${path}?by=M` });
    expect(desc.body).toMatch(/The uplift table could not be answered/);
    const better = await t.app.inject({ method: 'GET', url: `${path}?better=sideways` });
    expect(better.statusCode).toBe(400);
    expect(better.headers['content-type']).toMatch(/application\/problem\+json/);
  });

  it('an altered link is 404 and an expired one 403, both problem+json; the token is no API key', async () => {
    const { path } = (await mint(WS_A.read)).json();
    const token = path.slice('/reports/'.length);
    const flipped = token.slice(0, 5) + (token[5] === 'A' ? 'B' : 'A') + token.slice(6);
    const altered = await t.app.inject({ method: 'GET', url: `/reports/${flipped}` });
    expect(altered.statusCode).toBe(404);
    expect(altered.json().type).toBe('ERR_REPORT_LINK_INVALID');
    expect(altered.headers['content-type']).toMatch(/application\/problem\+json/);
    expect((await t.app.inject({ method: 'GET', url: '/reports/garbage' })).json().type).toBe('ERR_REPORT_LINK_INVALID');
    const saved = clock.now;
    clock.now += 61 * 60_000;
    try {
      const expired = await t.app.inject({ method: 'GET', url: path });
      expect(expired.statusCode).toBe(403);
      expect(expired.json().type).toBe('ERR_REPORT_LINK_EXPIRED');
    } finally {
      clock.now = saved;
    }
    const asKey = await t.app.inject({ method: 'POST', url: `/v1/models/${MODEL_ID}/versions/1/report-links`, headers: { authorization: `Bearer ${token}` } });
    expect(asKey.statusCode).toBe(401);
  });
});

describe('graph drawing', () => {
  const graph: VersionGraph = {
    nodes: [
      { name: 'A', kind: 'continuous' },
      { name: 'B', kind: 'binary' },
      { name: 'C', kind: 'continuous' },
    ],
    edges: [
      { from: 'A', to: 'B', probability: 0.8 },
      { from: 'B', to: 'C', probability: 0.3 },
      { from: 'C', to: 'B', probability: 0.6 },
    ],
    graphs: [],
  };
  const svg = renderGraphSvg(graph, { treatment: 'A', outcome: 'C' });
  const edge = (key: string) => new RegExp(`<g class="edge" data-edge="${key}"[^]*?</g>`).exec(svg)![0];

  it('edges at 0.5 or more carry a visible label; weaker ones are dashed, with their probability on hover only', () => {
    expect(edge('A→B')).toContain('>0.80</text>');
    expect(edge('A→B')).not.toContain('stroke-dasharray');
    expect(edge('B→C')).toContain('stroke-dasharray');
    expect(edge('B→C')).not.toContain('class="edge-label"');
    expect(edge('B→C')).toContain('<title>B → C: probability 30%</title>');
    // Both directions of an uncertain pair are drawn.
    expect(edge('C→B')).toContain('>0.60</text>');
  });

  it('stroke width and opacity grow with the probability', () => {
    const w = (key: string) => Number(/stroke-width="([\d.]+)"/.exec(edge(key))![1]);
    const o = (key: string) => Number(/stroke-opacity="([\d.]+)"/.exec(edge(key))![1]);
    expect(w('B→C')).toBeLessThan(w('C→B'));
    expect(w('C→B')).toBeLessThan(w('A→B'));
    expect(o('B→C')).toBeLessThan(o('C→B'));
    expect(o('C→B')).toBeLessThan(o('A→B'));
  });

  it('without tiers there are no tier rules; every node is placed inside the drawing', () => {
    expect(svg).not.toContain('class="tier"');
    const [, W, H] = /viewBox="0 0 (\d+) (\d+)"/.exec(svg)!.map(Number);
    for (const m of svg.matchAll(/<rect class="node-box[^"]*" x="([\d.-]+)" y="([\d.-]+)" width="([\d.]+)" height="([\d.]+)"/g)) {
      const [x, y, w, h] = m.slice(1).map(Number);
      expect(x).toBeGreaterThanOrEqual(0);
      expect(y).toBeGreaterThanOrEqual(0);
      expect(x + w).toBeLessThanOrEqual(W);
      expect(y + h).toBeLessThanOrEqual(H);
    }
  });
});
