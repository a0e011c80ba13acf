/**
 * Signed, expiring, read-only links to one model version's report page.
 *
 * A token is `<payload>.<signature>`, both base64url: the payload is the JSON array
 * [workspaceId, modelId, versionId, expiresAtSeconds]; the signature is HMAC-SHA256 over the
 * payload's base64url text, keyed by the server's link secret, with a domain label so the
 * secret signs nothing else. Verification recomputes the HMAC and compares it in constant
 * time (timingSafeEqual) before it reads the payload, then checks the expiry.
 */
import { createHmac, timingSafeEqual } from 'node:crypto';

/** What a link grants: exactly one version of one model in one workspace, until `expiresAt`. */
export interface ReportLinkClaims {
  readonly workspaceId: string;
  readonly modelId: string;
  readonly versionId: string;
  /** Expiry, in whole seconds since the epoch. */
  readonly expiresAt: number;
}

/** Default lifetime of a link, in minutes. */
export const DEFAULT_LINK_MINUTES = 60;
/** Longest lifetime of a link: 7 days, in minutes. */
export const MAX_LINK_MINUTES = 7 * 24 * 60;
/** Shortest secret accepted (bytes of UTF-8): an HMAC key shorter than this is easy to guess. */
export const MIN_SECRET_LENGTH = 16;

const DOMAIN = 'fulcrum/report-link/v1\n';

/** Why a token was refused. */
export type LinkRefusal = 'malformed' | 'bad-signature' | 'expired';

/** A refused token: `reason` says whether it was altered/malformed or only expired. */
export class ReportLinkError extends Error {
  constructor(
    readonly reason: LinkRefusal,
    /** Expiry of a well-signed but expired token (seconds since the epoch). */
    readonly expiredAt?: number,
  ) {
    super(reason === 'expired' ? `report link expired at ${new Date((expiredAt ?? 0) * 1000).toISOString()}` : `report link is not valid (${reason})`);
    this.name = 'ReportLinkError';
  }
}

function checkSecret(secret: string): void {
  if (typeof secret !== 'string' || Buffer.byteLength(secret) < MIN_SECRET_LENGTH) {
    throw new RangeError(`the report link secret must be at least ${MIN_SECRET_LENGTH} bytes`);
  }
}

function mac(secret: string, payload: string): Buffer {
  return createHmac('sha256', secret).update(DOMAIN).update(payload).digest();
}

/** Sign a link's claims into a token. */
export function signReportLink(secret: string, claims: ReportLinkClaims): string {
  checkSecret(secret);
  if (!Number.isInteger(claims.expiresAt) || claims.expiresAt <= 0) throw new RangeError('expiresAt must be a positive whole number of seconds');
  const payload = Buffer.from(JSON.stringify([claims.workspaceId, claims.modelId, claims.versionId, claims.expiresAt])).toString('base64url');
  return `${payload}.${mac(secret, payload).toString('base64url')}`;
}

/**
 * Verify a token and return its claims; throws ReportLinkError when it is malformed, its
 * signature does not match (any altered byte), or it has expired at `nowMs`.
 */
export function verifyReportLink(secret: string, token: string, nowMs: number = Date.now()): ReportLinkClaims {
  checkSecret(secret);
  if (typeof token !== 'string' || token.length > 1024) throw new ReportLinkError('malformed');
  const m = /^([A-Za-z0-9_-]+)\.([A-Za-z0-9_-]{43})$/.exec(token);
  if (!m) throw new ReportLinkError('malformed');
  const [, payload, sig] = m;
  const given = Buffer.from(sig, 'base64url');
  const want = mac(secret, payload);
  // Re-encode to reject non-canonical base64url spellings of the same bytes.
  if (given.length !== want.length || given.toString('base64url') !== sig || !timingSafeEqual(given, want)) {
    throw new ReportLinkError('bad-signature');
  }
  let parsed: unknown;
  try {
    parsed = JSON.parse(Buffer.from(payload, 'base64url').toString('utf8'));
  } catch {
    throw new ReportLinkError('malformed');
  }
  if (
    !Array.isArray(parsed) ||
    parsed.length !== 4 ||
    typeof parsed[0] !== 'string' ||
    typeof parsed[1] !== 'string' ||
    typeof parsed[2] !== 'string' ||
    !Number.isInteger(parsed[3])
  ) {
    throw new ReportLinkError('malformed');
  }
  const claims: ReportLinkClaims = { workspaceId: parsed[0], modelId: parsed[1], versionId: parsed[2], expiresAt: parsed[3] };
  if (nowMs >= claims.expiresAt * 1000) throw new ReportLinkError('expired', claims.expiresAt);
  return claims;
}

/** Expiry in seconds for a link minted at `nowMs` that lives `minutes` (clamped to 1 … MAX_LINK_MINUTES). */
export function linkExpiry(nowMs: number, minutes: number = DEFAULT_LINK_MINUTES): number {
  const m = Math.min(MAX_LINK_MINUTES, Math.max(1, Math.floor(minutes)));
  return Math.floor(nowMs / 1000) + m * 60;
}
