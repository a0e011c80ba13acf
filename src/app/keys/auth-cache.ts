/**
 * Authenticated keys remembered for a moment, so a dashboard's stream of queries does not
 * cost a database round trip each. Only successes are remembered; revoking a key through
 * this process forgets it at once, and other replicas stop accepting it within `ttlMs`.
 */
import { LRUCache } from 'lru-cache';
import type { KeysRepository } from '../../store/keys-repository.js';
import { authenticate, type Principal } from './authenticate.js';

/** How long another replica may still accept a key revoked elsewhere. */
export const AUTH_CACHE_TTL_MS = 1000;

export function createAuthCache(keys: KeysRepository, ttlMs = AUTH_CACHE_TTL_MS) {
  const cache = new LRUCache<string, Principal>({ max: 10_000, ttl: ttlMs });
  return {
    async authenticate(presented: string): Promise<Principal> {
      const hit = cache.get(presented);
      if (hit) return hit;
      const principal = await authenticate(keys, presented);
      cache.set(presented, principal);
      return principal;
    },
    /** Forget every remembered use of a key (called when it is revoked). */
    forgetKey(keyId: string): void {
      for (const [presented, p] of cache.entries()) if (p.keyId === keyId) cache.delete(presented);
    },
  };
}

export type AuthCache = ReturnType<typeof createAuthCache>;
