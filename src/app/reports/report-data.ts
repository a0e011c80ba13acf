/**
 * Everything one report page shows, gathered through the same service calls the API routes
 * make (models.get / models.version / models.listVersions / models.diff, queries.effect,
 * queries.uplift). Nothing here computes a number of its own: the renderer only formats
 * what these calls return.
 *
 * The question (treatment, arms, reference, outcome, segments, direction, costs) comes from
 * the page's query parameters, with defaults from the version's spec and the treatment's
 * levels. A question the service refuses (4xx) is shown on the page with the service's
 * message instead of failing the whole page.
 */
import type { VersionGraph } from '../../jobs/compute-tasks.js';
import type { EffectEstimate } from '../../core/effects/ate.js';
import type { UpliftTable } from '../../core/effects/uplift.js';
import { FulcrumError } from '../../errors/fulcrum-error.js';
import type { VersionMeta } from '../../store/models-repository.js';
import { type GraphReading, versionGraphView } from '../models/graph-reading.js';
import type { GraphDiff } from '../models/graph-views.js';
import type { ModelsService } from '../models/models-service.js';
import type { QueriesService } from '../queries/queries-service.js';
import type { ReportLinkClaims } from './report-links.js';

/** The page's query parameters, already split (arms, by and costs are comma lists in the URL). */
export interface ReportQuestionInput {
  treatment?: string;
  outcome?: string;
  arms?: string[];
  reference?: string;
  by?: string[];
  better?: 'higher' | 'lower';
  costs?: number[];
}

/** The question the page answers, after defaults. */
export interface ReportQuestion {
  treatment: string;
  outcome: string;
  arms: Array<string | number>;
  reference: string | number;
  by: string[];
  better: 'higher' | 'lower';
  costs?: number[];
  /** Plain-language notes on which parts came from defaults. */
  defaults: string[];
}

/** An answer, or the service's message when it refused the question. */
export type Outcome<T> = { ok: true; value: T } | { ok: false; error: string };

/** Everything the renderer needs. */
export interface ReportData {
  model: { id: string; name: string };
  version: VersionMeta;
  graph: VersionGraph;
  /** How to read the graph's probabilities (models/graph-reading.ts). */
  reading: GraphReading;
  /** Tiers of the model's knowledge, when it has them. */
  tiers: string[][] | null;
  question: ReportQuestion | null;
  /** Why there is no question (no treatment/outcome known, or arms needed). */
  questionNote: string | null;
  /** One ATE per arm against the reference (queries.effect). */
  effects: Array<{ arm: string; answer: Outcome<EffectEstimate> }>;
  /** The uplift table (queries.uplift); null when no segment variable is available. */
  uplift: Outcome<UpliftTable> | null;
  upliftNote: string | null;
  /** The previous version and the graph diff to it (models.diff), or null for a first version. */
  previous: { number: number; diff: GraphDiff } | null;
  /** When the link that opened the page expires (ISO), if opened by a link. */
  linkExpiresAt: string | null;
}

/** Spec fields the report reads (a stored spec is untyped JSON). */
interface SpecView {
  treatment?: string;
  outcome?: string;
  knowledge?: { tiers?: string[][] };
}

/** Descendants of `start` in any graph of the set (by name). */
function descendantsInAnyGraph(graph: VersionGraph, start: string): Set<string> {
  const out = new Set<string>();
  const lists = graph.graphs.length > 0 ? graph.graphs.map((g) => g.edges) : [graph.edges.map((e) => [e.from, e.to] as [string, string])];
  for (const edges of lists) {
    const stack = [start];
    const seen = new Set<string>([start]);
    while (stack.length > 0) {
      const v = stack.pop()!;
      for (const [a, b] of edges) {
        if (a === v && !seen.has(b)) {
          seen.add(b);
          out.add(b);
          stack.push(b);
        }
      }
    }
  }
  return out;
}

/** The question after defaults, or a note saying what the page needs. */
export function resolveQuestion(graph: VersionGraph, spec: SpecView, q: ReportQuestionInput): { question: ReportQuestion | null; note: string | null } {
  const defaults: string[] = [];
  const treatment = q.treatment ?? spec.treatment;
  const outcome = q.outcome ?? spec.outcome;
  if (!treatment || !outcome) {
    return { question: null, note: 'This model names no treatment and outcome; add ?treatment=…&outcome=… to the link to see effects.' };
  }
  for (const v of [treatment, outcome]) {
    if (!graph.nodes.some((n) => n.name === v)) {
      return { question: null, note: `“${v}” is not a variable of this model; choose one of: ${graph.nodes.map((n) => n.name).join(', ')}.` };
    }
  }
  if (!q.treatment) defaults.push(`treatment “${treatment}” from the model`);
  if (!q.outcome) defaults.push(`outcome “${outcome}” from the model`);
  const node = graph.nodes.find((n) => n.name === treatment);
  const levels = node?.levels && node.kind !== 'continuous' ? node.levels : null;
  const asArm = (s: string): string | number => (levels ? s : Number(s));
  let reference: string | number;
  let arms: Array<string | number>;
  if (q.reference !== undefined) reference = asArm(q.reference);
  else if (levels) {
    reference = levels[0];
    defaults.push(`reference arm “${reference}” (the treatment's first level)`);
  } else if (node?.kind === 'binary') {
    reference = 0;
    defaults.push('reference arm 0');
  } else {
    return { question: null, note: `The treatment “${treatment}” is numeric; add ?arms=…&reference=… (values to set it to) to see effects.` };
  }
  if (q.arms && q.arms.length > 0) arms = q.arms.map(asArm);
  else if (levels) {
    arms = levels.filter((l) => l !== reference);
    defaults.push('every other level as an arm');
  } else if (node?.kind === 'binary') {
    arms = [reference === 0 ? 1 : 0];
  } else {
    return { question: null, note: `The treatment “${treatment}” is numeric; add ?arms=… to see effects.` };
  }
  let by = q.by ?? [];
  if (by.length === 0) {
    const desc = descendantsInAnyGraph(graph, treatment);
    const candidate = graph.nodes.find((n) => n.kind !== 'continuous' && n.levels && n.name !== treatment && n.name !== outcome && !desc.has(n.name));
    if (candidate) {
      by = [candidate.name];
      defaults.push(`segments by “${candidate.name}” (the first discrete variable the treatment cannot affect)`);
    }
  }
  const better = q.better ?? 'higher';
  if (!q.better) defaults.push('higher outcome is better (add ?better=lower to flip)');
  return { question: { treatment, outcome, arms, reference, by, better, costs: q.costs, defaults }, note: null };
}

/** Run a service call; a refused question (4xx) becomes its message, anything else is thrown. */
async function attempt<T>(fn: () => Promise<T>): Promise<Outcome<T>> {
  try {
    return { ok: true, value: await fn() };
  } catch (e) {
    if (e instanceof FulcrumError && e.status < 500) return { ok: false, error: e.message };
    throw e;
  }
}

/** Gather a report for the version a link grants (workspace, model and version from the claims). */
export async function gatherReport(
  services: { models: ModelsService; queries: QueriesService },
  claims: Pick<ReportLinkClaims, 'workspaceId' | 'modelId' | 'versionId'> & { expiresAt?: number },
  input: ReportQuestionInput,
): Promise<ReportData> {
  const { models, queries } = services;
  const ws = claims.workspaceId;
  const model = await models.get(ws, claims.modelId);
  const version = await models.version(ws, claims.modelId, claims.versionId);
  const { reading, ...graph } = versionGraphView(version);
  const spec = (version.spec ?? model.spec) as SpecView;
  const tiers = spec.knowledge?.tiers && spec.knowledge.tiers.length > 0 ? spec.knowledge.tiers.map((t) => [...t]) : null;
  const { question, note } = resolveQuestion(graph, spec, input);

  const effects: ReportData['effects'] = [];
  let uplift: ReportData['uplift'] = null;
  let upliftNote: string | null = null;
  if (question) {
    for (const arm of question.arms) {
      const answer = await attempt(async () =>
        (await queries.effect(ws, claims.modelId, { treatment: question.treatment, outcome: question.outcome, arm, reference: question.reference }, version.id)).result,
      );
      effects.push({ arm: String(arm), answer });
    }
    if (question.by.length > 0) {
      uplift = await attempt(async () =>
        (
          await queries.uplift(
            ws,
            claims.modelId,
            {
              treatment: question.treatment,
              outcome: question.outcome,
              arms: question.arms,
              reference: question.reference,
              by: { cells: question.by },
              better: question.better,
              ...(question.costs ? { costs: question.costs } : {}),
            },
            version.id,
          )
        ).result,
      );
    } else {
      upliftNote = 'No discrete variable the treatment cannot affect was found; add ?by=… to see the uplift table.';
    }
  }

  let previous: ReportData['previous'] = null;
  const earlier = (await models.listVersions(ws, claims.modelId)).filter((v) => v.number < version.number).sort((a, b) => b.number - a.number)[0];
  if (earlier) {
    const d = await models.diff(ws, claims.modelId, earlier.id, version.id);
    previous = { number: d.from, diff: { gained: d.gained, lost: d.lost, changed: d.changed, threshold: d.threshold } };
  }
  return {
    model: { id: model.id, name: model.name },
    version,
    graph,
    reading,
    tiers,
    question,
    questionNote: note,
    effects,
    uplift,
    upliftNote,
    previous,
    linkExpiresAt: claims.expiresAt !== undefined ? new Date(claims.expiresAt * 1000).toISOString() : null,
  };
}
