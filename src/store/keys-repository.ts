/**
 * API keys: only the public prefix and a SHA-256 hash of the secret are stored.
 * Every read and write except `findByPrefix` (authentication) is scoped by workspace.
 */
import { randomUUID } from 'node:crypto';
import type { Db } from './db.js';
import { UUID } from './column-values.js';

/** A key as stored (no secret). */
export interface ApiKeyRow {
  readonly id: string;
  readonly workspaceId: string;
  readonly prefix: string;
  readonly name: string;
  readonly scopes: readonly string[];
  readonly createdAt: Date;
  readonly revokedAt: Date | null;
}

/** A key with its hash, for authentication only. */
export interface ApiKeyWithHash extends ApiKeyRow {
  readonly hash: string;
}

/** Fields of a new key. */
export interface NewApiKey {
  readonly workspaceId: string;
  readonly prefix: string;
  readonly hash: string;
  readonly name: string;
  readonly scopes: readonly string[];
}

interface RawKey {
  id: string;
  workspace_id: string;
  prefix: string;
  hash?: string;
  name: string;
  scopes: string[] | string;
  created_at: Date | string;
  revoked_at: Date | string | null;
}

const COLUMNS = 'id, workspace_id, prefix, name, scopes, created_at, revoked_at';

// PGlite and pg both decode text[]; keep a fallback for the '{a,b}' literal form.
const decodeArray = (v: string[] | string): string[] =>
  Array.isArray(v) ? v : v.replace(/^\{|\}$/g, '').split(',').filter((s) => s.length > 0);

const toKey = (r: RawKey): ApiKeyRow => ({
  id: r.id,
  workspaceId: r.workspace_id,
  prefix: r.prefix,
  name: r.name,
  scopes: decodeArray(r.scopes),
  createdAt: new Date(r.created_at),
  revokedAt: r.revoked_at === null ? null : new Date(r.revoked_at),
});


/** Repository factory; every method takes an optional transaction to run inside. */
export function createKeysRepository(db: Db) {
  return {
    /** Insert a key and return it (without hash). */
    async create(key: NewApiKey, tx?: Db): Promise<ApiKeyRow> {
      const res = await (tx ?? db).query<RawKey>(
        `INSERT INTO api_keys (id, workspace_id, prefix, hash, name, scopes)
         VALUES ($1, $2, $3, $4, $5, $6::text[]) RETURNING ${COLUMNS}`,
        [randomUUID(), key.workspaceId, key.prefix, key.hash, key.name, [...key.scopes]],
      );
      return toKey(res.rows[0]);
    },

    /** The key with this prefix including its hash (authentication), or null. */
    async findByPrefix(prefix: string, tx?: Db): Promise<ApiKeyWithHash | null> {
      const res = await (tx ?? db).query<RawKey>(`SELECT ${COLUMNS}, hash FROM api_keys WHERE prefix = $1`, [prefix]);
      const r = res.rows[0];
      return r ? { ...toKey(r), hash: String(r.hash) } : null;
    },

    /** Keys of one workspace, newest first. */
    async listByWorkspace(workspaceId: string, tx?: Db): Promise<ApiKeyRow[]> {
      const res = await (tx ?? db).query<RawKey>(
        `SELECT ${COLUMNS} FROM api_keys WHERE workspace_id = $1 ORDER BY created_at DESC, id`,
        [workspaceId],
      );
      return res.rows.map(toKey);
    },

    /** The key with this id in this workspace, or null (also null for a malformed id). */
    async findById(workspaceId: string, id: string, tx?: Db): Promise<ApiKeyRow | null> {
      if (!UUID.test(id)) return null;
      const res = await (tx ?? db).query<RawKey>(
        `SELECT ${COLUMNS} FROM api_keys WHERE workspace_id = $1 AND id = $2`,
        [workspaceId, id],
      );
      return res.rows[0] ? toKey(res.rows[0]) : null;
    },

    /** Mark a key revoked (idempotent); returns the key, or null when not in this workspace. */
    async revoke(workspaceId: string, id: string, tx?: Db): Promise<ApiKeyRow | null> {
      if (!UUID.test(id)) return null;
      const res = await (tx ?? db).query<RawKey>(
        `UPDATE api_keys SET revoked_at = COALESCE(revoked_at, now())
         WHERE workspace_id = $1 AND id = $2 RETURNING ${COLUMNS}`,
        [workspaceId, id],
      );
      return res.rows[0] ? toKey(res.rows[0]) : null;
    },

    /** Number of active (not revoked) keys of a workspace holding a scope. */
    async countActiveWithScope(workspaceId: string, scope: string, tx?: Db): Promise<number> {
      const res = await (tx ?? db).query<{ n: number | string }>(
        `SELECT count(*)::int AS n FROM api_keys
         WHERE workspace_id = $1 AND revoked_at IS NULL AND $2 = ANY (scopes)`,
        [workspaceId, scope],
      );
      return Number(res.rows[0].n);
    },
  };
}

/** The keys repository. */
export type KeysRepository = ReturnType<typeof createKeysRepository>;
