/**
 * Creating a model and starting fits. Everything the user could get wrong is checked here,
 * before anything is written: the dataset exists in the workspace, the variables are its
 * columns, the knowledge is consistent, a fixed graph is acyclic, there are enough rows.
 * The model row, the job row and the queue entry are made together: when the queue does
 * not answer, the transaction rolls back and the caller gets 503, with nothing half-made.
 */
import { randomUUID } from 'node:crypto';
import { directLingamRefusal } from '../../core/discovery/direct-lingam.js';
import { compileKnowledge, KnowledgeError } from '../../core/discovery/knowledge.js';
import { checkLearnerOptions } from '../../core/discovery/learner-options.js';
import { graphFromEdges } from '../../core/graph/graph.js';
import { topologicalOrder } from '../../core/graph/index.js';
import { dataError } from '../../errors/data-errors.js';
import { modelError } from '../../errors/model-errors.js';
import type { QueuePort } from '../../jobs/queue-port.js';
import type { Db } from '../../store/db.js';
import type { DatasetsRepository } from '../../store/datasets-repository.js';
import type { ColumnSchema } from '../../store/dataset-types.js';
import type { JobsRepository, JobRow, JobTrigger } from '../../store/jobs-repository.js';
import type { ModelRow, ModelsRepository } from '../../store/models-repository.js';
import { FIT_ATTEMPTS, FIT_BACKOFF_MS, FIT_JOB, fitQueueIds, type FitStartData } from './fit-job-data.js';
import { MIN_FIT_ROWS, SPEC_DEFAULTS, type ModelSpec } from './model-spec.js';

export interface ModelsDeps {
  db: Db;
  models: ModelsRepository;
  jobs: JobsRepository;
  datasets: DatasetsRepository;
  queue: QueuePort;
}

/** A model spec as the user sends it (defaults not yet applied). */
export type ModelSpecInput = Partial<Omit<ModelSpec, 'datasetId' | 'name' | 'mechanisms'>> & {
  datasetId: string;
  name: string;
  mechanisms?: Partial<ModelSpec['mechanisms']>;
};

/** Check the input against the dataset and fill the defaults. */
export async function resolveSpec(deps: ModelsDeps, workspaceId: string, input: ModelSpecInput): Promise<ModelSpec> {
  const ds = await deps.datasets.find(workspaceId, input.datasetId);
  if (!ds) throw dataError('ERR_DATA_UNKNOWN_DATASET', { id: input.datasetId });
  const schema = await deps.datasets.columns(ds.id);
  const columns = schema.map((c) => c.name);
  const known = new Set(columns);
  const of = `dataset ${ds.id}`;
  const check = (where: string, v: string, pool: ReadonlySet<string>, poolName: string, list: readonly string[]) => {
    if (!pool.has(v)) throw modelError('ERR_MODEL_UNKNOWN_VARIABLE', { where, variable: v, of: poolName, known: list.join(', ') });
  };
  const variables = input.variables && input.variables.length > 0 ? [...input.variables] : columns;
  for (const v of variables) check('variables', v, known, of, columns);
  if (new Set(variables).size !== variables.length) throw modelError('ERR_QUERY_INVALID', { reason: 'variables lists a name twice; list each variable once.' });
  if (variables.length < 2) throw modelError('ERR_MODEL_TOO_FEW_VARIABLES', { count: variables.length });
  const chosen = new Set(variables);
  const spec_ = 'the model\'s variables';
  if (input.treatment) check('treatment', input.treatment, chosen, spec_, variables);
  if (input.outcome) check('outcome', input.outcome, chosen, spec_, variables);
  for (const v of Object.keys(input.mechanisms?.perNode ?? {})) check('mechanisms.perNode', v, chosen, spec_, variables);
  if (input.treatment) {
    const one = await singleValue(deps, ds.id, schema.find((c) => c.name === input.treatment)!);
    if (one !== null) throw modelError('ERR_MODEL_TREATMENT_ONE_VALUE', { variable: input.treatment, value: one, rows: ds.rowCount });
  }
  if (input.treatment && input.treatment === input.outcome) {
    throw modelError('ERR_QUERY_INVALID', { reason: 'treatment and outcome are the same variable; choose two different variables.' });
  }
  const knowledge = input.knowledge ?? {};
  try {
    compileKnowledge(variables, knowledge);
  } catch (e) {
    if (e instanceof KnowledgeError) throw modelError('ERR_MODEL_KNOWLEDGE', { reason: e.message, edges: e.edges });
    throw e;
  }
  if (input.fixedGraph) {
    for (const [a, b] of input.fixedGraph.edges) {
      check(`fixed graph edge ${a}→${b}`, a, chosen, spec_, variables);
      check(`fixed graph edge ${a}→${b}`, b, chosen, spec_, variables);
    }
    const g = graphFromEdges(variables, input.fixedGraph.edges);
    if (!topologicalOrder(g)) {
      throw modelError('ERR_MODEL_FIXED_GRAPH_CYCLE', { cycle: input.fixedGraph.edges.map(([a, b]) => `${a}→${b}`).join(', ') });
    }
  }
  if (input.learnerOptions && !input.fixedGraph) {
    try {
      checkLearnerOptions(input.learner ?? SPEC_DEFAULTS.learner, input.learnerOptions);
    } catch (e) {
      if (e instanceof RangeError || e instanceof TypeError) throw modelError('ERR_MODEL_LEARNER_OPTIONS', { reason: e.message });
      throw e;
    }
  }
  if (input.learner === 'direct-lingam' && !input.fixedGraph) {
    const refusal = directLingamRefusal(schema.filter((c) => chosen.has(c.name)));
    if (refusal) throw modelError('ERR_MODEL_LEARNER_COLUMNS', { reason: refusal });
  }
  if (ds.rowCount < MIN_FIT_ROWS) throw modelError('ERR_MODEL_TOO_FEW_ROWS', { id: ds.id, rows: ds.rowCount, min: MIN_FIT_ROWS });
  return {
    datasetId: ds.id,
    name: input.name,
    variables,
    treatment: input.treatment,
    outcome: input.outcome,
    knowledge,
    fixedGraph: input.fixedGraph,
    learner: input.learner ?? SPEC_DEFAULTS.learner,
    learnerOptions: input.learnerOptions ?? {},
    replicates: input.fixedGraph ? 1 : (input.replicates ?? SPEC_DEFAULTS.replicates),
    mechanisms: {
      family: input.mechanisms?.family ?? SPEC_DEFAULTS.family,
      noise: input.mechanisms?.noise ?? SPEC_DEFAULTS.noise,
      perNode: input.mechanisms?.perNode,
    },
    referenceRows: input.referenceRows ?? SPEC_DEFAULTS.referenceRows,
    seed: input.seed ?? SPEC_DEFAULTS.seed,
  };
}

/**
 * Record a fit of `model` on the dataset's batches as they are now (a queued jobs row,
 * inside `tx`). The caller enqueues it with `enqueueFit` once `tx` has committed, so a
 * worker never picks up a job whose row it cannot see yet.
 */
export async function recordFit(deps: ModelsDeps, model: ModelRow, trigger: JobTrigger, tx: Db): Promise<FitStartData> {
  const spec = model.spec as ModelSpec;
  const batches = (await deps.datasets.batches(spec.datasetId, tx)).map((b) => b.batch);
  const jobId = randomUUID();
  await deps.jobs.insert({ id: jobId, workspaceId: model.workspaceId, modelId: model.id, trigger, replicatesTotal: spec.fixedGraph ? 0 : spec.replicates }, tx);
  return { jobId, workspaceId: model.workspaceId, modelId: model.id, batches };
}

/**
 * Enqueue a recorded fit. When the queue does not answer, `undo` removes what was recorded
 * and the caller gets 503 (ERR_QUEUE_UNAVAILABLE), with nothing half-made.
 */
export async function enqueueFit(deps: ModelsDeps, data: FitStartData, undo: () => Promise<unknown>): Promise<JobRow> {
  try {
    await deps.queue.add({ name: FIT_JOB.start, data, opts: { jobId: fitQueueIds.start(data.jobId), attempts: FIT_ATTEMPTS, backoffMs: FIT_BACKOFF_MS } });
  } catch {
    await undo();
    throw modelError('ERR_QUEUE_UNAVAILABLE');
  }
  return (await deps.jobs.find(data.workspaceId, data.jobId))!;
}

/** Create a model and enqueue its first fit. */
export async function createModel(deps: ModelsDeps, workspaceId: string, input: ModelSpecInput): Promise<{ model: ModelRow; job: JobRow }> {
  const spec = await resolveSpec(deps, workspaceId, input);
  const id = randomUUID();
  const fit = await deps.db.transaction(async (tx) => {
    await deps.models.insert({ id, workspaceId, datasetId: spec.datasetId, name: spec.name, spec }, tx);
    return recordFit(deps, (await deps.models.find(workspaceId, id, tx))!, 'create', tx);
  });
  const job = await enqueueFit(deps, fit, () => deps.models.remove(workspaceId, id));
  return { model: (await deps.models.find(workspaceId, id))!, job };
}

/** Fit the model again on the dataset's newest batches (manual refit or a schedule's tick). */
export async function refitModel(deps: ModelsDeps, model: ModelRow, trigger: JobTrigger): Promise<JobRow> {
  const fit = await deps.db.transaction((tx) => recordFit(deps, model, trigger, tx));
  return enqueueFit(deps, fit, () => deps.jobs.remove(fit.jobId));
}

/**
 * The one value a column takes over all the dataset's batches (from the stored batch
 * statistics: level counts, or the continuous range), or null when it takes two or more.
 */
async function singleValue(deps: ModelsDeps, datasetId: string, column: ColumnSchema): Promise<string | null> {
  const seen = new Set<string>();
  let min = Infinity;
  let max = -Infinity;
  for (const b of await deps.datasets.batches(datasetId)) {
    const st = b.stats[column.sqlColumn];
    if (!st) continue;
    if (st.kind === 'continuous') {
      if (st.min !== null) min = Math.min(min, st.min);
      if (st.max !== null) max = Math.max(max, st.max);
    } else for (const [level, count] of Object.entries(st.counts)) if (count > 0) seen.add(level);
  }
  if (column.kind === 'continuous') return min === max ? String(min) : null;
  return seen.size === 1 ? [...seen][0] : null;
}
