/**
 * First start: when the database holds no workspace, create one with an admin key — either a
 * fresh random key (returned so the caller can print it once) or FULCRUM_BOOTSTRAP_KEY.
 */
import { ConfigError } from '../../config.js';
import { createWorkspaceWithAdminKey, type KeyDeps } from './key-use-cases.js';
import { keyFromString } from './key-secret.js';

/** What bootstrap did. `printKey` is set only for a key generated now (show it once). */
export interface BootstrapResult {
  readonly created: boolean;
  readonly workspaceId?: string;
  readonly printKey?: string;
}

// Arbitrary constant naming the bootstrap advisory lock, so two replicas starting on an empty
// database do not both create a workspace.
const BOOTSTRAP_LOCK = 704_223_911;

/** Create the first workspace and admin key when the database has none. */
export async function bootstrapWorkspace(deps: KeyDeps, bootstrapKey?: string): Promise<BootstrapResult> {
  const given = bootstrapKey ? keyFromString(bootstrapKey) : undefined;
  if (given === null) throw new ConfigError('FULCRUM_BOOTSTRAP_KEY does not look like a Fulcrum key (fk_<prefix>_<secret>)');
  return deps.db.transaction(async (tx) => {
    await tx.query('SELECT pg_advisory_xact_lock($1)', [BOOTSTRAP_LOCK]);
    if ((await deps.workspaces.count(tx)) > 0) return { created: false };
    const made = await createWorkspaceWithAdminKey(deps, 'default', given ?? undefined, tx);
    return { created: true, workspaceId: made.workspaceId, printKey: given ? undefined : made.adminKey.key };
  });
}
