/**
 * Signed, expiring, read-only links to one model version's report page.
 *
 * A token is `<payload>.<tag>`, both base64url. The payload is 53 bytes: a format byte (1),
 * the workspace, model and version ids (UUIDs, 16 bytes each) and the expiry (seconds since
 * the epoch, unsigned 32-bit big-endian). The tag is HMAC-SHA256 over a domain label and the
 * payload bytes, keyed by the server's link secret, truncated to its first 128 bits — half
 * the hash output, the shortest length RFC 2104 (Krawczyk, Bellare & Canetti 1997, §5)
 * recommends — which keeps the whole token at 94 characters, inside one URL path segment of
 * fastify's default 100-character parameter limit. Verification recomputes the tag and
 * compares it in constant time (timingSafeEqual) before it reads the payload, then checks
 * the expiry.
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
const FORMAT = 1;
const PAYLOAD_BYTES = 1 + 16 * 3 + 4;
const TAG_BYTES = 16;
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

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

/** The (truncated) HMAC-SHA256 tag of a payload. */
export function reportLinkTag(secret: string, payload: Uint8Array): Buffer {
  return createHmac('sha256', secret).update(DOMAIN).update(payload).digest().subarray(0, TAG_BYTES);
}

const uuidBytes = (id: string, what: string): Buffer => {
  if (!UUID.test(id)) throw new RangeError(`${what} must be a UUID to be signed into a report link`);
  return Buffer.from(id.replace(/-/g, ''), 'hex');
};
const uuidText = (b: Buffer): string => {
  const h = b.toString('hex');
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
};

/** Sign a link's claims into a token. */
export function signReportLink(secret: string, claims: ReportLinkClaims): string {
  checkSecret(secret);
  if (!Number.isInteger(claims.expiresAt) || claims.expiresAt <= 0 || claims.expiresAt > 0xffffffff) {
    throw new RangeError('expiresAt must be a whole number of seconds in (0, 2^32)');
  }
  const payload = Buffer.alloc(PAYLOAD_BYTES);
  payload[0] = FORMAT;
  uuidBytes(claims.workspaceId, 'workspaceId').copy(payload, 1);
  uuidBytes(claims.modelId, 'modelId').copy(payload, 17);
  uuidBytes(claims.versionId, 'versionId').copy(payload, 33);
  payload.writeUInt32BE(claims.expiresAt, 49);
  return `${payload.toString('base64url')}.${reportLinkTag(secret, payload).toString('base64url')}`;
}

/**
 * Verify a token and return its claims; throws ReportLinkError when it is malformed, its
 * tag does not match (any altered byte), or it has expired at `nowMs`.
 */
export function verifyReportLink(secret: string, token: string, nowMs: number = Date.now()): ReportLinkClaims {
  checkSecret(secret);
  if (typeof token !== 'string') throw new ReportLinkError('malformed');
  const m = /^([A-Za-z0-9_-]{71})\.([A-Za-z0-9_-]{22})$/.exec(token);
  if (!m) throw new ReportLinkError('malformed');
  const payload = Buffer.from(m[1], 'base64url');
  const given = Buffer.from(m[2], 'base64url');
  // Non-canonical spellings (unused low bits set in the last character) are refused too.
  if (payload.length !== PAYLOAD_BYTES || given.length !== TAG_BYTES || payload.toString('base64url') !== m[1] || given.toString('base64url') !== m[2]) {
    throw new ReportLinkError('malformed');
  }
  if (!timingSafeEqual(given, reportLinkTag(secret, payload))) throw new ReportLinkError('bad-signature');
  if (payload[0] !== FORMAT) throw new ReportLinkError('malformed');
  const claims: ReportLinkClaims = {
    workspaceId: uuidText(payload.subarray(1, 17)),
    modelId: uuidText(payload.subarray(17, 33)),
    versionId: uuidText(payload.subarray(33, 49)),
    expiresAt: payload.readUInt32BE(49),
  };
  if (nowMs >= claims.expiresAt * 1000) throw new ReportLinkError('expired', claims.expiresAt);
  return claims;
}

/** Expiry in seconds for a link minted at `nowMs` that lives `minutes` (clamped to 1 … MAX_LINK_MINUTES). */
export function linkExpiry(nowMs: number, minutes: number = DEFAULT_LINK_MINUTES): number {
  const m = Math.min(MAX_LINK_MINUTES, Math.max(1, Math.floor(minutes)));
  return Math.floor(nowMs / 1000) + m * 60;
}
