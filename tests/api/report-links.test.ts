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
    expect(token).toMatch(/^[A-Za-z0-9_-]+\.[A-Za-z0-9_-]{43}$/);
    expect(verifyReportLink(SECRET, token, NOW)).toEqual(claims);
  });

  it('the signature is HMAC-SHA256 of the payload under the secret (checked with node:crypto directly)', () => {
    const token = signReportLink(SECRET, claims);
    const [payload, sig] = token.split('.');
    // Independent recomputation: the documented domain label, then the payload text.
    const want = createHmac('sha256', SECRET).update('fulcrum/report-link/v1\n').update(payload).digest('base64url');
    expect(sig).toBe(want);
    expect(JSON.parse(Buffer.from(payload, 'base64url').toString('utf8'))).toEqual([claims.workspaceId, claims.modelId, claims.versionId, claims.expiresAt]);
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
    const [, sig] = token.split('.');
    const otherPayload = Buffer.from(JSON.stringify([claims.workspaceId, claims.modelId, '44444444-4444-4444-8444-444444444444', claims.expiresAt])).toString('base64url');
    expect(refusal(() => verifyReportLink(SECRET, `${otherPayload}.${sig}`, NOW))).toBe('bad-signature');
    const later = Buffer.from(JSON.stringify([claims.workspaceId, claims.modelId, claims.versionId, claims.expiresAt + 10 ** 6])).toString('base64url');
    expect(refusal(() => verifyReportLink(SECRET, `${later}.${sig}`, NOW))).toBe('bad-signature');
    expect(refusal(() => verifyReportLink('another-secret-of-32-bytes-long!', token, NOW))).toBe('bad-signature');
  });

  it('garbage, truncated and empty tokens are malformed', () => {
    const token = signReportLink(SECRET, claims);
    expect(refusal(() => verifyReportLink(SECRET, '', NOW))).toBe('malformed');
    expect(refusal(() => verifyReportLink(SECRET, 'not-a-token', NOW))).toBe('malformed');
    expect(refusal(() => verifyReportLink(SECRET, token.slice(0, -1), NOW))).toBe('malformed');
    expect(refusal(() => verifyReportLink(SECRET, `${token}x`, NOW))).toBe('malformed');
    // A correctly signed payload that is not the expected shape is malformed, not trusted.
    const odd = Buffer.from(JSON.stringify({ workspaceId: 'x' })).toString('base64url');
    const sig = createHmac('sha256', SECRET).update('fulcrum/report-link/v1\n').update(odd).digest('base64url');
    expect(refusal(() => verifyReportLink(SECRET, `${odd}.${sig}`, NOW))).toBe('malformed');
  });

  it('lifetimes: 60 minutes by default, clamped to 1 minute … 7 days; short secrets are rejected', () => {
    expect(linkExpiry(NOW)).toBe(NOW / 1000 + 3600);
    expect(linkExpiry(NOW, 10 ** 9)).toBe(NOW / 1000 + 7 * 24 * 3600);
    expect(MAX_LINK_MINUTES).toBe(10_080);
    expect(linkExpiry(NOW, 0)).toBe(NOW / 1000 + 60);
    expect(() => signReportLink('short', claims)).toThrow(RangeError);
    expect(() => verifyReportLink('short', 'a.b', NOW)).toThrow(RangeError);
  });
});
