/**
 * Key lifecycle: create (secret returned once), list (prefix only), revoke, and the creation of
 * a workspace with its first admin key. All scoped by workspace; none knows about HTTP.
 */
import { apiError } from '../../errors/catalogue.js';
import type { Db } from '../../store/db.js';
import type { KeysRepository } from '../../store/keys-repository.js';
import type { WorkspacesRepository } from '../../store/workspaces-repository.js';
import { mintKey, type MintedKey, type Scope } from './key-secret.js';
import { toKeyView, type KeyView } from './key-views.js';

/** What the key use cases need. */
export interface KeyDeps {
  readonly db: Db;
  readonly keys: KeysRepository;
  readonly workspaces: WorkspacesRepository;
}

/** A new key: its public view plus the full key, which is shown once and never stored. */
export interface CreatedKey extends KeyView {
  readonly key: string;
}

/** Create a key in a workspace. */
export async function createKey(
  deps: KeyDeps,
  workspaceId: string,
  input: { name?: string; scopes: readonly Scope[] },
  tx?: Db,
  minted: MintedKey = mintKey(),
): Promise<CreatedKey> {
  const scopes = [...new Set(input.scopes)].sort();
  const row = await deps.keys.create(
    { workspaceId, prefix: minted.prefix, hash: minted.hash, name: input.name ?? '', scopes },
    tx,
  );
  return { ...toKeyView(row), key: minted.key };
}

/** Keys of a workspace (prefix only). */
export async function listKeys(deps: KeyDeps, workspaceId: string): Promise<KeyView[]> {
  return (await deps.keys.listByWorkspace(workspaceId)).map(toKeyView);
}

/**
 * Revoke a key of this workspace. A key of another workspace is "not found" (its existence is
 * not revealed). Revoking the last active admin key is refused so a workspace cannot lock itself out.
 */
export async function revokeKey(deps: KeyDeps, workspaceId: string, keyId: string): Promise<KeyView> {
  return deps.db.transaction(async (tx) => {
    const existing = await deps.keys.findById(workspaceId, keyId, tx);
    if (!existing) throw apiError('ERR_KEY_NOT_FOUND', { id: keyId });
    if (existing.revokedAt === null && existing.scopes.includes('admin')) {
      const admins = await deps.keys.countActiveWithScope(workspaceId, 'admin', tx);
      if (admins <= 1) throw apiError('ERR_KEY_LAST_ADMIN', { id: keyId });
    }
    const revoked = await deps.keys.revoke(workspaceId, keyId, tx);
    if (!revoked) throw apiError('ERR_KEY_NOT_FOUND', { id: keyId });
    return toKeyView(revoked);
  });
}

/** A new workspace with one admin key holding every scope (inside `tx` when given). */
export async function createWorkspaceWithAdminKey(
  deps: KeyDeps,
  name: string,
  minted: MintedKey = mintKey(),
  tx?: Db,
): Promise<{ workspaceId: string; workspaceName: string; adminKey: CreatedKey }> {
  const run = async (t: Db) => {
    const ws = await deps.workspaces.create(name, t);
    const adminKey = await createKey(deps, ws.id, { name: 'admin', scopes: ['read', 'write', 'admin'] }, t, minted);
    return { workspaceId: ws.id, workspaceName: ws.name, adminKey };
  };
  return tx ? run(tx) : deps.db.transaction(run);
}
