/**
 * Authentication: a presented bearer key → the workspace and scopes it grants, or an error.
 */
import { apiError } from '../../errors/catalogue.js';
import type { KeysRepository } from '../../store/keys-repository.js';
import { parseKey, secretMatches, type Scope } from './key-secret.js';

/** Who is calling: set on every authenticated request. */
export interface Principal {
  readonly workspaceId: string;
  readonly keyId: string;
  readonly keyPrefix: string;
  readonly scopes: readonly Scope[];
}

/**
 * Check a presented key. Unknown, malformed, revoked and wrong-secret keys all give the same
 * ERR_AUTH_INVALID_KEY, so a caller learns nothing about which part was wrong.
 */
export async function authenticate(keys: KeysRepository, presented: string): Promise<Principal> {
  const parts = parseKey(presented);
  if (!parts) throw apiError('ERR_AUTH_INVALID_KEY');
  const row = await keys.findByPrefix(parts.prefix);
  if (!row || row.revokedAt !== null || !secretMatches(parts.secret, row.hash)) throw apiError('ERR_AUTH_INVALID_KEY');
  return { workspaceId: row.workspaceId, keyId: row.id, keyPrefix: row.prefix, scopes: row.scopes as Scope[] };
}

/** Throw ERR_AUTH_MISSING_SCOPE unless the principal holds the scope. */
export function requireScope(principal: Principal, scope: Scope): void {
  if (!principal.scopes.includes(scope)) throw apiError('ERR_AUTH_MISSING_SCOPE', { scope });
}
