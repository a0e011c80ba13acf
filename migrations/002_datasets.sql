-- Datasets. Each dataset's rows live in their own table, named from the dataset id
-- (`ds_<32 hex>`), with one generated column per variable (`c1`, `c2`, …), a `batch`
-- number and a `row_no` (0-based position in the dataset). No user text ever becomes a
-- SQL identifier: `dataset_columns` maps each generated column to the user's name.
--   continuous → double precision; binary → smallint 0/1 (levels[0] = 0, levels[1] = 1);
--   categorical → text (the level label). Missing values are NULL.
-- An analyst can read a dataset with, for example:
--   SELECT column_ident, name, kind FROM dataset_columns WHERE dataset_id = '…' ORDER BY position;
--   SELECT batch, c1, c2 FROM ds_… ORDER BY row_no;

CREATE TABLE datasets (
  id            uuid PRIMARY KEY,
  workspace_id  uuid NOT NULL REFERENCES workspaces (id) ON DELETE CASCADE,
  name          text NOT NULL,
  table_name    text NOT NULL UNIQUE CHECK (table_name ~ '^ds_[0-9a-f]{32}$'),
  row_count     bigint NOT NULL DEFAULT 0,
  created_at    timestamptz NOT NULL DEFAULT now(),
  updated_at    timestamptz NOT NULL DEFAULT now()
);

CREATE INDEX datasets_workspace_idx ON datasets (workspace_id, created_at);

CREATE TABLE dataset_columns (
  dataset_id    uuid NOT NULL REFERENCES datasets (id) ON DELETE CASCADE,
  position      integer NOT NULL,
  name          text NOT NULL,
  column_ident  text NOT NULL CHECK (column_ident ~ '^c[0-9]+$'),
  kind          text NOT NULL CHECK (kind IN ('continuous', 'binary', 'categorical')),
  levels        jsonb,
  levels_declared boolean NOT NULL DEFAULT false,
  inference     text NOT NULL DEFAULT '',
  PRIMARY KEY (dataset_id, position),
  UNIQUE (dataset_id, name)
);

-- One row per upload or append. `stats` holds per-column sufficient statistics of this
-- batch (count, missing, mean, m2, min, max, or level counts) so that dataset-wide figures
-- are merged without rescanning the rows.
CREATE TABLE dataset_batches (
  dataset_id    uuid NOT NULL REFERENCES datasets (id) ON DELETE CASCADE,
  batch         integer NOT NULL CHECK (batch >= 1),
  row_count     bigint NOT NULL,
  first_row     bigint NOT NULL,
  source        text NOT NULL CHECK (source IN ('csv', 'json')),
  stats         jsonb NOT NULL,
  created_at    timestamptz NOT NULL DEFAULT now(),
  PRIMARY KEY (dataset_id, batch)
);

-- Deleting a dataset (directly, or through its workspace) drops its row table in the same
-- transaction, so no orphaned ds_… table is left behind. table_name is a generated name
-- (checked above), quoted with %I.
CREATE FUNCTION drop_dataset_table() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  EXECUTE format('DROP TABLE IF EXISTS %I', OLD.table_name);
  RETURN OLD;
END
$$;

CREATE TRIGGER datasets_drop_table AFTER DELETE ON datasets
  FOR EACH ROW EXECUTE FUNCTION drop_dataset_table();
