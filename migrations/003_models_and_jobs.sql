-- Models, their immutable fitted versions, fit jobs and refit schedules.
--
-- A model is a spec (dataset, variables, knowledge, learner and mechanism options, seed).
-- Each successful fit writes one model_versions row in one transaction, and only then
-- moves models.current_version_id: a query never sees a half-written version.
-- A version is reproducible: it records the dataset batches it was fitted on.

CREATE TABLE models (
  id                  uuid PRIMARY KEY,
  workspace_id        uuid NOT NULL REFERENCES workspaces (id) ON DELETE CASCADE,
  -- A dataset with models cannot be deleted until its models are (no silent loss).
  dataset_id          uuid NOT NULL REFERENCES datasets (id) ON DELETE RESTRICT,
  name                text NOT NULL,
  spec                jsonb NOT NULL,
  current_version_id  uuid,
  created_at          timestamptz NOT NULL DEFAULT now(),
  updated_at          timestamptz NOT NULL DEFAULT now()
);

CREATE INDEX models_workspace_idx ON models (workspace_id, created_at);
CREATE INDEX models_dataset_idx ON models (dataset_id);

CREATE TABLE model_versions (
  id              uuid PRIMARY KEY,
  model_id        uuid NOT NULL REFERENCES models (id) ON DELETE CASCADE,
  workspace_id    uuid NOT NULL REFERENCES workspaces (id) ON DELETE CASCADE,
  number          integer NOT NULL CHECK (number >= 1),
  -- The fit job that wrote it: a retried job finds its version instead of writing a second.
  job_id          uuid NOT NULL UNIQUE,
  spec            jsonb NOT NULL,
  dataset_batches integer[] NOT NULL,
  row_count       bigint NOT NULL,
  graph           jsonb NOT NULL,
  diagnostics     jsonb NOT NULL,
  timings         jsonb NOT NULL,
  artifact        bytea NOT NULL,
  created_at      timestamptz NOT NULL DEFAULT now(),
  UNIQUE (model_id, number)
);

ALTER TABLE models
  ADD CONSTRAINT models_current_version_fk FOREIGN KEY (current_version_id)
  REFERENCES model_versions (id) ON DELETE SET NULL DEFERRABLE INITIALLY DEFERRED;

CREATE TABLE jobs (
  id                uuid PRIMARY KEY,
  workspace_id      uuid NOT NULL REFERENCES workspaces (id) ON DELETE CASCADE,
  model_id          uuid REFERENCES models (id) ON DELETE CASCADE,
  kind              text NOT NULL CHECK (kind IN ('fit')),
  trigger           text NOT NULL CHECK (trigger IN ('create', 'manual', 'schedule')),
  state             text NOT NULL CHECK (state IN ('queued', 'running', 'succeeded', 'failed', 'cancelled')),
  stage             text NOT NULL DEFAULT 'queued',
  percent           real NOT NULL DEFAULT 0,
  message           text NOT NULL DEFAULT '',
  error             text,
  attempts          integer NOT NULL DEFAULT 0,
  replicates_total  integer NOT NULL DEFAULT 0,
  replicates_done   integer NOT NULL DEFAULT 0,
  version_id        uuid REFERENCES model_versions (id) ON DELETE SET NULL,
  cancel_requested  boolean NOT NULL DEFAULT false,
  created_at        timestamptz NOT NULL DEFAULT now(),
  started_at        timestamptz,
  finished_at       timestamptz
);

CREATE INDEX jobs_workspace_idx ON jobs (workspace_id, created_at);
CREATE INDEX jobs_model_idx ON jobs (model_id, created_at);

CREATE TABLE model_schedules (
  model_id      uuid PRIMARY KEY REFERENCES models (id) ON DELETE CASCADE,
  workspace_id  uuid NOT NULL REFERENCES workspaces (id) ON DELETE CASCADE,
  cron          text NOT NULL,
  tz            text NOT NULL,
  created_at    timestamptz NOT NULL DEFAULT now(),
  updated_at    timestamptz NOT NULL DEFAULT now()
);
