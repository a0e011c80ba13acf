/**
 * Remembered authentications: a key revoked by another replica (here: straight in the
 * database) stops working within AUTH_CACHE_TTL_MS; one revoked through this process stops
 * at once.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { AUTH_CACHE_TTL_MS } from '../../src/app/keys/auth-cache.js';
import { bearer, startTestApp, type TestApp } from './helpers/test-app.js';

describe('authentication cache', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp('pglite');
  });
  afterAll(async () => {
    await t?.close();
  });

  it('stops accepting a key revoked elsewhere within the cache lifetime', async () => {
    const key = await t.key(t.a.id, ['read']);
    expect((await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(key) })).statusCode).toBe(200);
    const prefix = key.split('_')[1];
    await t.db.query('UPDATE api_keys SET revoked_at = now() WHERE prefix = $1', [prefix]);
    await new Promise((r) => setTimeout(r, AUTH_CACHE_TTL_MS + 100));
    expect((await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(key) })).statusCode).toBe(401);
  });

  it('stops accepting a key revoked through this process at once', async () => {
    const key = await t.key(t.a.id, ['read']);
    expect((await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(key) })).statusCode).toBe(200);
    const list = await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(t.a.adminKey) });
    const id = list.json().keys.find((k: { prefix: string }) => key.includes(k.prefix)).id;
    expect((await t.app.inject({ method: 'DELETE', url: `/v1/keys/${id}`, headers: bearer(t.a.adminKey) })).statusCode).toBe(200);
    expect((await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(key) })).statusCode).toBe(401);
  });
});
