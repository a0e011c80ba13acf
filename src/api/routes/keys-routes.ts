/**
 * /v1/keys (admin scope): list (prefix only), create (the key is shown once), revoke.
 * /v1/workspace (read scope): the caller's own workspace.
 */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import type { AuthCache } from '../../app/keys/auth-cache.js';
import { createKey, listKeys, revokeKey, type KeyDeps } from '../../app/keys/key-use-cases.js';
import { apiError } from '../../errors/catalogue.js';
import { withProblems } from '../schemas/problem.js';
import { CreateKeyBody, CreatedKey, KeyIdParams, KeyList, KeyView, WorkspaceView } from '../schemas/keys.js';

export const keysRoutes: FastifyPluginAsyncZod<{ deps: KeyDeps; auth: AuthCache }> = async (app, { deps, auth }) => {
  app.get(
    '/keys',
    { config: { scope: 'admin' }, schema: { tags: ['keys'], summary: 'List the keys of this workspace (prefixes only)', response: withProblems({ 200: KeyList }) } },
    async (request) => ({ keys: await listKeys(deps, request.principal.workspaceId) }),
  );

  app.post(
    '/keys',
    {
      config: { scope: 'admin' },
      schema: { tags: ['keys'], summary: 'Create a key; the response holds the key once', body: CreateKeyBody, response: withProblems({ 201: CreatedKey }) },
    },
    async (request, reply) => {
      const created = await createKey(deps, request.principal.workspaceId, request.body);
      reply.code(201);
      return created;
    },
  );

  app.delete(
    '/keys/:id',
    {
      config: { scope: 'admin' },
      schema: { tags: ['keys'], summary: 'Revoke a key (it stops working at once here, and within a second on other api replicas)', params: KeyIdParams, response: withProblems({ 200: KeyView }) },
    },
    async (request) => {
      const revoked = await revokeKey(deps, request.principal.workspaceId, request.params.id);
      auth.forgetKey(revoked.id);
      return revoked;
    },
  );

  app.get(
    '/workspace',
    { config: { scope: 'read' }, schema: { tags: ['workspace'], summary: 'The workspace of the calling key', response: withProblems({ 200: WorkspaceView }) } },
    async (request) => {
      const ws = await deps.workspaces.findById(request.principal.workspaceId);
      if (!ws) throw apiError('ERR_AUTH_INVALID_KEY');
      return { id: ws.id, name: ws.name, createdAt: ws.createdAt.toISOString() };
    },
  );
};
