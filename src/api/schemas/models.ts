/** Request and response schemas of /v1/models, versions, jobs and schedules. */
import { z } from 'zod';

const Name = z.string().min(1).max(200);
const Variable = z.string().min(1).max(200);
const Edge = z.tuple([Variable, Variable]);

export const Knowledge = z
  .object({
    tiers: z.array(z.array(Variable)).max(100).optional().describe('Ordered groups: no variable may cause one in an earlier tier.'),
    forbidden: z.array(Edge).max(10_000).optional().describe('Edges [from, to] that may not appear.'),
    required: z.array(Edge).max(10_000).optional().describe('Edges [from, to] that must appear.'),
  })
  .strict();

export const MechanismFamily = z.enum(['auto', 'linear', 'mlp']);

export const CreateModelBody = z
  .object({
    name: Name,
    datasetId: z.string().min(1).max(100),
    variables: z.array(Variable).max(500).optional().describe('Variables to use (default: every column of the dataset).'),
    treatment: Variable.optional().describe('Treatment of interest (used by the report and as a default).'),
    outcome: Variable.optional().describe('Outcome of interest.'),
    knowledge: Knowledge.optional(),
    fixedGraph: z.object({ edges: z.array(Edge).max(10_000) }).strict().optional().describe('Skip learning: use exactly these edges (weight 1).'),
    learner: z.enum(['auto', 'pc', 'linear-notears', 'mlp-notears', 'direct-lingam', 'cam']).optional().describe('Graph learner; auto picks one from the data and says why.'),
    learnerOptions: z
      .record(z.string(), z.union([z.number(), z.string(), z.boolean()]))
      .optional()
      .describe(
        'The learner\'s own options (for example {"alpha": 0.05} for pc, {"candidates": 10} for cam), plus "missing" ("mean-mode" or "drop-rows") and "standardise". An option the learner does not have, or a value it refuses, answers 400 ERR_MODEL_LEARNER_OPTIONS; with learner "auto", options of learners it does not pick are noted and unused.',
      ),
    replicates: z.number().int().min(1).max(200).optional().describe('Bootstrap replicates (default 20).'),
    mechanisms: z
      .object({
        family: MechanismFamily.optional(),
        noise: z.enum(['gaussian', 'empirical']).optional(),
        perNode: z.record(Variable, MechanismFamily).optional(),
      })
      .strict()
      .optional(),
    referenceRows: z.number().int().min(50).max(20_000).optional().describe('Bound on the reference sample kept in each version (default 5000).'),
    seed: z.number().int().min(0).max(2 ** 31 - 1).optional(),
  })
  .strict();

export const ModelView = z.object({
  id: z.string(),
  name: z.string(),
  datasetId: z.string(),
  spec: z.unknown(),
  currentVersionId: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});

export const JobView = z.object({
  id: z.string(),
  modelId: z.string().nullable(),
  kind: z.string(),
  trigger: z.string(),
  state: z.enum(['queued', 'running', 'succeeded', 'failed', 'cancelled']),
  stage: z.string(),
  percent: z.number(),
  message: z.string(),
  error: z.string().nullable(),
  attempts: z.number(),
  replicatesTotal: z.number(),
  replicatesDone: z.number(),
  versionId: z.string().nullable(),
  createdAt: z.string(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
});

export const CreatedModel = z.object({ model: ModelView, job: JobView });
export const ModelList = z.object({ models: z.array(ModelView) });
export const JobList = z.object({ jobs: z.array(JobView) });

export const VersionView = z.object({
  id: z.string(),
  modelId: z.string(),
  number: z.number(),
  jobId: z.string(),
  spec: z.unknown(),
  datasetBatches: z.array(z.number()),
  rowCount: z.number(),
  diagnostics: z.unknown(),
  timings: z.unknown(),
  createdAt: z.string(),
});
export const VersionList = z.object({ versions: z.array(VersionView) });

export const GraphView = z.object({
  model: z.string(),
  version: z.number(),
  nodes: z.array(z.object({ name: z.string(), kind: z.string(), levels: z.array(z.string()).optional() })),
  edges: z.array(z.object({ from: z.string(), to: z.string(), probability: z.number() })),
  graphs: z.array(z.object({ weight: z.number(), count: z.number(), edges: z.array(z.tuple([z.string(), z.string()])) })),
  reading: z
    .object({
      cautions: z.array(z.string()),
      undetermined: z.array(z.object({ between: z.tuple([z.string(), z.string()]), adjacent: z.number(), split: z.tuple([z.number(), z.number()]) })),
    })
    .describe('How to read the probabilities: what they measure, what the directions rest on, and the adjacencies whose direction the data leave open (the less frequent direction holds over a third of the weight).'),
});

export const DiffView = z.object({
  from: z.number(),
  to: z.number(),
  threshold: z.number(),
  gained: z.array(z.object({ from: z.string(), to: z.string(), probability: z.number() })),
  lost: z.array(z.object({ from: z.string(), to: z.string(), probability: z.number() })),
  changed: z.array(z.object({ from: z.string(), to: z.string(), before: z.number(), after: z.number(), change: z.number() })),
});

export const ScheduleBody = z.object({
  cron: z.string().min(9).max(100).describe('Five cron fields, e.g. "0 2 * * *" for 02:00 every night.'),
  timezone: z.string().min(1).max(64).describe('IANA time zone, e.g. "Europe/London".'),
}).strict();
export const ScheduleView = z.object({
  modelId: z.string(),
  cron: z.string(),
  timezone: z.string(),
  next: z.string().optional(),
  createdAt: z.string(),
  updatedAt: z.string(),
});

export const IdParams = z.object({ id: z.string().min(1).max(100) });
export const VersionParams = z.object({ id: z.string().min(1).max(100), version: z.string().min(1).max(100) });
export const DiffQuery = z.object({ from: z.string().min(1).max(100), to: z.string().min(1).max(100).default('current') }).strict();
/** Strict: a misspelt filter (modelid) must not silently list every job. */
export const JobsQuery = z.object({ modelId: z.string().max(100).optional(), limit: z.coerce.number().int().min(1).max(500).optional() }).strict();
