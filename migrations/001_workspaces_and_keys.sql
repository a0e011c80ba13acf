-- Workspaces own every object; API keys belong to one workspace and carry scopes.
-- Only a SHA-256 hash of each key's secret is stored, never the key itself.

CREATE TABLE workspaces (
  id          uuid PRIMARY KEY,
  name        text NOT NULL,
  created_at  timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE api_keys (
  id            uuid PRIMARY KEY,
  workspace_id  uuid NOT NULL REFERENCES workspaces (id) ON DELETE CASCADE,
  prefix        text NOT NULL UNIQUE,
  hash          text NOT NULL,
  scopes        text[] NOT NULL,
  name          text NOT NULL DEFAULT '',
  created_at    timestamptz NOT NULL DEFAULT now(),
  revoked_at    timestamptz,
  CONSTRAINT api_keys_scopes_known CHECK (scopes <@ ARRAY['read', 'write', 'admin']::text[])
);

CREATE INDEX api_keys_workspace_idx ON api_keys (workspace_id);
