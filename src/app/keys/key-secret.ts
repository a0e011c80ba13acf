/**
 * API key material. A key reads `fk_<prefix>_<secret>`: the prefix (12 characters, public,
 * unique) finds the stored row; the secret (32 random bytes, base64url) is checked against its
 * stored SHA-256 hash in constant time. A plain hash is enough here because the secret carries
 * 256 bits of entropy — there is nothing to guess, so no slow password hash is needed.
 */
import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';

/** Scopes a key can carry. `read`: GETs and queries; `write`: data, models, fits; `admin`: keys. */
export const SCOPES = ['read', 'write', 'admin'] as const;
/** One scope. */
export type Scope = (typeof SCOPES)[number];

const PREFIX_ALPHABET = 'abcdefghijkmnpqrstuvwxyz23456789'; // 32 symbols: one per 5 bits, no bias
const PREFIX_LENGTH = 12;
const KEY_PATTERN = /^fk_([A-Za-z0-9]{8,32})_([A-Za-z0-9_-]{32,128})$/;

/** A freshly minted key: `key` is shown to the caller once and never stored. */
export interface MintedKey {
  readonly key: string;
  readonly prefix: string;
  readonly hash: string;
}

/** Hex SHA-256 of a key's secret part. */
export function hashSecret(secret: string): string {
  return createHash('sha256').update(secret, 'utf8').digest('hex');
}

/** Split a presented key into prefix and secret, or null when it does not have the key shape. */
export function parseKey(key: string): { prefix: string; secret: string } | null {
  const m = KEY_PATTERN.exec(key);
  return m ? { prefix: m[1], secret: m[2] } : null;
}

/** Mint a new random key. */
export function mintKey(): MintedKey {
  const bytes = randomBytes(PREFIX_LENGTH);
  let prefix = '';
  for (let i = 0; i < PREFIX_LENGTH; i++) prefix += PREFIX_ALPHABET[bytes[i] & 31];
  const secret = randomBytes(32).toString('base64url');
  return { key: `fk_${prefix}_${secret}`, prefix, hash: hashSecret(secret) };
}

/** Take a key given from outside (FULCRUM_BOOTSTRAP_KEY) into prefix and hash; null when malformed. */
export function keyFromString(key: string): MintedKey | null {
  const parts = parseKey(key);
  return parts ? { key, prefix: parts.prefix, hash: hashSecret(parts.secret) } : null;
}

/** Constant-time comparison of a presented secret with a stored hex hash. */
export function secretMatches(secret: string, storedHash: string): boolean {
  const a = Buffer.from(hashSecret(secret), 'hex');
  const b = Buffer.from(storedHash, 'hex');
  return a.length === b.length && timingSafeEqual(a, b);
}
