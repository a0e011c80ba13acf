import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bootstrapWorkspace } from '../../src/app/keys/bootstrap.js';
import { hashSecret, mintKey, parseKey } from '../../src/app/keys/key-secret.js';
import { announceBackends, backends, bearer, startTestApp, type TestApp } from './helpers/test-app.js';

announceBackends('auth-and-keys');

describe.each(backends())('auth and keys on %s', (backend) => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp(backend);
  });
  afterAll(async () => {
    await t?.close();
  });

  it('refuses a /v1 request without a key with 401 problem+json', async () => {
    const res = await t.app.inject({ method: 'GET', url: '/v1/datasets' });
    expect(res.statusCode).toBe(401);
    expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(res.headers['www-authenticate']).toBe('Bearer');
    expect(res.json()).toMatchObject({ type: 'ERR_AUTH_MISSING_KEY', status: 401, instance: '/v1/datasets' });
  });

  it('refuses a header that is not a bearer key', async () => {
    const res = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: { authorization: 'Basic Zm9vOmJhcg==' } });
    expect(res.statusCode).toBe(401);
    expect(res.json().type).toBe('ERR_AUTH_MISSING_KEY');
  });

  it('refuses an unknown key, a malformed key and a known prefix with the wrong secret alike', async () => {
    const real = parseKey(t.a.adminKey)!;
    const wrongSecret = `fk_${real.prefix}_${'A'.repeat(43)}`;
    for (const key of [mintKey().key, 'fk_short', wrongSecret]) {
      const res = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(key) });
      expect(res.statusCode).toBe(401);
      expect(res.json().type).toBe('ERR_AUTH_INVALID_KEY');
    }
  });

  it('accepts a valid key', async () => {
    const res = await t.app.inject({ method: 'GET', url: '/v1/workspace', headers: bearer(t.a.adminKey) });
    expect(res.statusCode).toBe(200);
    expect(res.json()).toMatchObject({ id: t.a.id, name: 'workspace A' });
  });

  it('answers 403 when the key lacks the scope, before reading the body', async () => {
    const readOnly = await t.key(t.a.id, ['read']);
    const write = await t.app.inject({
      method: 'POST',
      url: '/v1/datasets',
      headers: { ...bearer(readOnly), 'content-type': 'application/json' },
      payload: { name: 'x', columns: ['a'], rows: [[1]] },
    });
    expect(write.statusCode).toBe(403);
    expect(write.json()).toMatchObject({ type: 'ERR_AUTH_MISSING_SCOPE', scope: 'write' });
    const keys = await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(readOnly) });
    expect(keys.statusCode).toBe(403);
    expect(keys.json().scope).toBe('admin');
    const read = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(readOnly) });
    expect(read.statusCode).toBe(200);
    const writeOnly = await t.key(t.a.id, ['write']);
    const list = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(writeOnly) });
    expect(list.statusCode).toBe(403);
    expect(list.json().scope).toBe('read');
  });

  it('creates a key whose secret is shown once and stored only as a SHA-256 hash', async () => {
    const res = await t.app.inject({
      method: 'POST',
      url: '/v1/keys',
      headers: bearer(t.a.adminKey),
      payload: { name: 'dashboard', scopes: ['read'] },
    });
    expect(res.statusCode).toBe(201);
    const created = res.json();
    expect(created.key).toMatch(/^fk_[a-z2-9]{12}_[A-Za-z0-9_-]{43}$/);
    expect(created).toMatchObject({ name: 'dashboard', scopes: ['read'], revokedAt: null });
    const parts = parseKey(created.key)!;
    expect(created.prefix).toBe(parts.prefix);

    // The database holds the hash of the secret, and nowhere the key or the secret.
    const row = await t.db.query<{ hash: string }>('SELECT hash FROM api_keys WHERE id = $1', [created.id]);
    expect(row.rows[0].hash).toBe(hashSecret(parts.secret));
    const dump = await t.db.query<{ s: string }>('SELECT string_agg(k::text, \'|\') AS s FROM api_keys k');
    expect(dump.rows[0].s).not.toContain(parts.secret);

    // The listing shows prefixes, never a secret or a hash.
    const list = await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(t.a.adminKey) });
    expect(list.statusCode).toBe(200);
    const listed = list.json().keys.find((k: { id: string }) => k.id === created.id);
    expect(listed).toMatchObject({ prefix: parts.prefix, name: 'dashboard' });
    expect(listed.key).toBeUndefined();
    expect(list.body).not.toContain(parts.secret);
    expect(list.body).not.toContain(row.rows[0].hash);

    // The new key works for its scope.
    const use = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(created.key) });
    expect(use.statusCode).toBe(200);
  });

  it('revokes a key: from then on it gets 401', async () => {
    const key = await t.key(t.a.id, ['read']);
    const id = (await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(t.a.adminKey) }))
      .json()
      .keys.find((k: { prefix: string }) => k.prefix === parseKey(key)!.prefix).id;
    expect((await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(key) })).statusCode).toBe(200);
    const del = await t.app.inject({ method: 'DELETE', url: `/v1/keys/${id}`, headers: bearer(t.a.adminKey) });
    expect(del.statusCode).toBe(200);
    expect(del.json().revokedAt).not.toBeNull();
    const after = await t.app.inject({ method: 'GET', url: '/v1/datasets', headers: bearer(key) });
    expect(after.statusCode).toBe(401);
    expect(after.json().type).toBe('ERR_AUTH_INVALID_KEY');
  });

  it('refuses to revoke the last active admin key of a workspace', async () => {
    const ws = await t.deps.workspaces.create('solo');
    const admin = await t.key(ws.id, ['admin', 'read']);
    const list = (await t.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(admin) })).json().keys;
    expect(list).toHaveLength(1);
    const res = await t.app.inject({ method: 'DELETE', url: `/v1/keys/${list[0].id}`, headers: bearer(admin) });
    expect(res.statusCode).toBe(409);
    expect(res.json().type).toBe('ERR_KEY_LAST_ADMIN');
  });

  it('validates the key body and names the field', async () => {
    const res = await t.app.inject({ method: 'POST', url: '/v1/keys', headers: bearer(t.a.adminKey), payload: { scopes: ['root'] } });
    expect(res.statusCode).toBe(400);
    expect(res.json()).toMatchObject({ type: 'ERR_REQUEST_VALIDATION', location: 'body', field: 'scopes[0]' });
    expect(res.json().detail).toContain('scopes[0]');
  });

  it('refuses an unknown key in the body (label for name) instead of dropping it', async () => {
    const res = await t.app.inject({ method: 'POST', url: '/v1/keys', headers: bearer(t.a.adminKey), payload: { scopes: ['read'], label: 'etl' } });
    expect(res.statusCode).toBe(400);
    expect(res.json()).toMatchObject({ type: 'ERR_REQUEST_VALIDATION', location: 'body' });
    expect(res.json().detail).toContain('Unrecognized key: "label"');
  });

  it('bootstraps an empty database once, with a generated key or the given one', async () => {
    const fresh = await startTestApp(backend);
    try {
      // startTestApp made workspaces already: bootstrap must do nothing.
      expect(await bootstrapWorkspace(fresh.deps)).toEqual({ created: false });
      await fresh.db.query('DELETE FROM workspaces');
      const given = mintKey().key;
      const first = await bootstrapWorkspace(fresh.deps, given);
      expect(first.created).toBe(true);
      expect(first.printKey).toBeUndefined();
      const ok = await fresh.app.inject({ method: 'GET', url: '/v1/keys', headers: bearer(given) });
      expect(ok.statusCode).toBe(200);
      expect(ok.json().keys[0].scopes).toEqual(['admin', 'read', 'write']);
      expect((await bootstrapWorkspace(fresh.deps)).created).toBe(false);

      await fresh.db.query('DELETE FROM workspaces');
      const generated = await bootstrapWorkspace(fresh.deps);
      expect(generated.created).toBe(true);
      const res = await fresh.app.inject({ method: 'GET', url: '/v1/workspace', headers: bearer(generated.printKey!) });
      expect(res.statusCode).toBe(200);
      expect(res.json()).toMatchObject({ id: generated.workspaceId, name: 'default' });
    } finally {
      await fresh.close();
    }
  });
});
