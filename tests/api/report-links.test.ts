import { createHmac } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import {
  linkExpiry,
  MAX_LINK_MINUTES,
  ReportLinkError,
  signReportLink,
  verifyReportLink,
  type ReportLinkClaims,
} from '../../src/app/reports/report-links.js';

const SECRET = 'a-test-secret-of-32-bytes-length';
const NOW = Date.UTC(2026, 11, 1, 12, 0, 0);
const claims: ReportLinkClaims = {
  workspaceId: '11111111-1111-4111-8111-111111111111',
  modelId: '22222222-2222-4222-8222-222222222222',
  versionId: '33333333-3333-4333-8333-333333333333',
  expiresAt: NOW / 1000 + 3600,
};

const refusal = (fn: () => unknown): string => {
  try {
    fn();
  } catch (e) {
    if (e instanceof ReportLinkError) return e.reason;
    throw e;
  }
  return 'accepted';
};

describe('report links', () => {
  it('a signed token verifies to exactly its claims, and is URL-safe', () => {
    const token = signReportLink(SECRET, claims);
    expect(token).toMatch(/^[A-Za-z0-9_-]{71}\.[A-Za-z0-9_-]{22}$/);
    // Short enough for one path parameter under fastify's default maxParamLength (100).
    expect(token.length).toBeLessThanOrEqual(100);
    expect(verifyReportLink(SECRET, token, NOW)).toEqual(claims);
  });

  it('the tag is the first 128 bits of HMAC-SHA256 over the payload bytes (checked with node:crypto directly)', () => {
    const token = signReportLink(SECRET, claims);
    const [payload, sig] = token.split('.');
    const bytes = Buffer.from(payload, 'base64url');
    // Independent recomputation: the documented domain label, then the payload bytes.
    const want = createHmac('sha256', SECRET).update('fulcrum/report-link/v1\n').update(bytes).digest().subarray(0, 16).toString('base64url');
    expect(sig).toBe(want);
    // Layout: format byte, three UUIDs, expiry as uint32 big-endian.
    expect(bytes.length).toBe(53);
    expect(bytes[0]).toBe(1);
    expect(bytes.subarray(33, 49).toString('hex')).toBe(claims.versionId.replace(/-/g, ''));
    expect(bytes.readUInt32BE(49)).toBe(claims.expiresAt);
  });

  it('an expired token is refused as expired (at the expiry second and after), and accepted one ms before', () => {
    const token = signReportLink(SECRET, claims);
    expect(refusal(() => verifyReportLink(SECRET, token, claims.expiresAt * 1000 - 1))).toBe('accepted');
    expect(refusal(() => verifyReportLink(SECRET, token, claims.expiresAt * 1000))).toBe('expired');
    expect(refusal(() => verifyReportLink(SECRET, token, claims.expiresAt * 1000 + 86_400_000))).toBe('expired');
  });

  it('any altered character of payload or signature is refused', () => {
    const token = signReportLink(SECRET, claims);
    let refusedCount = 0;
    for (let i = 0; i < token.length; i++) {
      if (token[i] === '.') continue;
      const swapped = token[i] === 'A' ? 'B' : 'A';
      const altered = token.slice(0, i) + swapped + token.slice(i + 1);
      const r = refusal(() => verifyReportLink(SECRET, altered, NOW));
      expect(r === 'bad-signature' || r === 'malformed').toBe(true);
      refusedCount++;
    }
    expect(refusedCount).toBe(token.length - 1);
  });

  it('a token for another version, with a later expiry, or under another secret is refused', () => {
    const token = signReportLink(SECRET, claims);
    const [payload, sig] = token.split('.');
    const bytes = Buffer.from(payload, 'base64url');
    const other = Buffer.from(bytes);
    other[40] ^= 1; // another version id
    expect(refusal(() => verifyReportLink(SECRET, `${other.toString('base64url')}.${sig}`, NOW))).toBe('bad-signature');
    const later = Buffer.from(bytes);
    later.writeUInt32BE(claims.expiresAt + 10 ** 6, 49);
    expect(refusal(() => verifyReportLink(SECRET, `${later.toString('base64url')}.${sig}`, NOW))).toBe('bad-signature');
    expect(refusal(() => verifyReportLink('another-secret-of-32-bytes-long!', token, NOW))).toBe('bad-signature');
  });

  it('garbage, truncated and empty tokens are malformed', () => {
    const token = signReportLink(SECRET, claims);
    expect(refusal(() => verifyReportLink(SECRET, '', NOW))).toBe('malformed');
    expect(refusal(() => verifyReportLink(SECRET, 'not-a-token', NOW))).toBe('malformed');
    expect(refusal(() => verifyReportLink(SECRET, token.slice(0, -1), NOW))).toBe('malformed');
    expect(refusal(() => verifyReportLink(SECRET, `${token}x`, NOW))).toBe('malformed');
    // A correctly tagged payload of an unknown format is malformed, not trusted.
    const odd = Buffer.from(token.split('.')[0], 'base64url');
    odd[0] = 2;
    const tag = createHmac('sha256', SECRET).update('fulcrum/report-link/v1\n').update(odd).digest().subarray(0, 16).toString('base64url');
    expect(refusal(() => verifyReportLink(SECRET, `${odd.toString('base64url')}.${tag}`, NOW))).toBe('malformed');
  });

  it('lifetimes: 60 minutes by default, clamped to 1 minute … 7 days; short secrets are rejected', () => {
    expect(linkExpiry(NOW)).toBe(NOW / 1000 + 3600);
    expect(linkExpiry(NOW, 10 ** 9)).toBe(NOW / 1000 + 7 * 24 * 3600);
    expect(MAX_LINK_MINUTES).toBe(10_080);
    expect(linkExpiry(NOW, 0)).toBe(NOW / 1000 + 60);
    expect(() => signReportLink('short', claims)).toThrow(RangeError);
    expect(() => verifyReportLink('short', 'a.b', NOW)).toThrow(RangeError);
    expect(() => signReportLink(SECRET, { ...claims, modelId: 'not-a-uuid' })).toThrow(RangeError);
  });
});
