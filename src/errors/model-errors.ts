/**
 * The catalogue of model, fit-job, schedule and effect-query errors. Same shape as the API
 * and data catalogues: a stable code (the problem+json `type`), a status, a title and a
 * message template that says what to change.
 */
import { formatTemplate, type CatalogueEntry } from './catalogue.js';
import { FulcrumError } from './fulcrum-error.js';

export const MODEL_ERRORS = {
  ERR_MODEL_NOT_FOUND: {
    status: 404,
    title: 'Model not found',
    template: 'No model with id {id} in this workspace.',
  },
  ERR_MODEL_VERSION_NOT_FOUND: {
    status: 404,
    title: 'Version not found',
    template: 'Model {id} has no version {version}; list its versions with GET /v1/models/{id}/versions.',
  },
  ERR_MODEL_NOT_FITTED: {
    status: 409,
    title: 'Model not fitted yet',
    template: 'Model {id} has no fitted version yet; wait for its fit job ({job}) to finish, or pin a version.',
  },
  ERR_MODEL_UNKNOWN_VARIABLE: {
    status: 400,
    title: 'Unknown variable',
    template: '{where} names "{variable}", which is not a variable of {of}; known: {known}.',
  },
  ERR_MODEL_TOO_FEW_VARIABLES: {
    status: 400,
    title: 'Too few variables',
    template: 'A model needs at least 2 variables; got {count}.',
  },
  ERR_MODEL_LEARNER_COLUMNS: {
    status: 400,
    title: 'Learner cannot take these columns',
    template: '{reason}.',
  },
  ERR_MODEL_LEARNER_OPTIONS: {
    status: 400,
    title: 'Learner option not accepted',
    template: 'learnerOptions: {reason}.',
  },
  ERR_MODEL_TREATMENT_ONE_VALUE: {
    status: 400,
    title: 'Treatment takes one value',
    template:
      'The treatment "{variable}" takes one value ({value}) in all {rows} rows of the dataset: an effect compares arms the data show, so it needs at least two. Choose a treatment that varies, or append rows where it does.',
  },
  ERR_MODEL_KNOWLEDGE: {
    status: 400,
    title: 'Contradictory knowledge',
    template: '{reason}',
  },
  ERR_MODEL_FIXED_GRAPH_CYCLE: {
    status: 400,
    title: 'Fixed graph has a cycle',
    template: 'The fixed graph is not acyclic: {cycle}. Remove one of these edges.',
  },
  ERR_MODEL_TOO_FEW_ROWS: {
    status: 400,
    title: 'Too few rows',
    template: 'Dataset {id} has {rows} rows in the chosen batches; a fit needs at least {min}.',
  },
  ERR_MODEL_DATASET_IN_USE: {
    status: 409,
    title: 'Dataset in use',
    template: 'Dataset {id} is used by {count} model(s); delete those models first.',
  },
  ERR_JOB_NOT_FOUND: {
    status: 404,
    title: 'Job not found',
    template: 'No job with id {id} in this workspace.',
  },
  ERR_JOB_FINISHED: {
    status: 409,
    title: 'Job already finished',
    template: 'Job {id} has already {state}; only queued or running jobs can be cancelled.',
  },
  ERR_QUEUE_UNAVAILABLE: {
    status: 503,
    title: 'Job queue unavailable',
    template: 'The job queue does not answer, so no fit can be started now; effect queries still work. Try again shortly.',
  },
  ERR_SCHEDULE_NOT_FOUND: {
    status: 404,
    title: 'Schedule not found',
    template: 'Model {id} has no refit schedule.',
  },
  ERR_SCHEDULE_INVALID: {
    status: 400,
    title: 'Invalid schedule',
    template: 'The schedule "{cron}" in time zone "{tz}" is not valid: {reason}. Use five cron fields, e.g. "0 2 * * *", and an IANA zone such as "Europe/London".',
  },
  ERR_QUERY_UNKNOWN_VARIABLE: {
    status: 400,
    title: 'Unknown variable',
    template: '{where} names "{variable}", which is not a variable of this model; known: {known}.',
  },
  ERR_QUERY_INVALID: {
    status: 400,
    title: 'Invalid query',
    template: '{reason}',
  },
  ERR_QUERY_UNKNOWN_ARM: {
    status: 400,
    title: 'Unknown arm',
    template: 'Arm "{arm}" is not a level of {treatment}; its levels are: {levels}.',
  },
  ERR_QUERY_SEGMENT_DESCENDANT: {
    status: 422,
    title: 'Segment on a descendant of the treatment',
    template: '{reason}',
  },
  ERR_QUERY_SEGMENT_TOO_SMALL: {
    status: 422,
    title: 'Segment too small',
    template: 'Segment {segment} has {rows} reference rows; at least {min} are needed for a stable estimate. Widen the segment.',
  },
} as const satisfies Record<string, CatalogueEntry>;

export type ModelErrorCode = keyof typeof MODEL_ERRORS;

export function modelError(code: ModelErrorCode, params: Record<string, unknown> = {}): FulcrumError {
  const e = MODEL_ERRORS[code];
  return new FulcrumError(code, e.status, formatTemplate(e.template, params), params);
}
