/** The public view of a key: never the secret, never the hash. */
import type { ApiKeyRow } from '../../store/keys-repository.js';

/** A key as the API shows it. */
export interface KeyView {
  readonly id: string;
  readonly prefix: string;
  readonly name: string;
  readonly scopes: string[];
  readonly createdAt: string;
  readonly revokedAt: string | null;
}

/** Turn a stored key into its public view. */
export function toKeyView(k: ApiKeyRow): KeyView {
  return {
    id: k.id,
    prefix: k.prefix,
    name: k.name,
    scopes: [...k.scopes],
    createdAt: k.createdAt.toISOString(),
    revokedAt: k.revokedAt ? k.revokedAt.toISOString() : null,
  };
}
