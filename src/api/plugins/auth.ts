/**
 * The one auth hook for everything under /v1: a bearer key → `request.principal`, then the
 * route's scope (route config `scope`, default read for GET/HEAD and write otherwise).
 * It runs at onRequest, before the body is read, so a refused request writes nothing.
 */
import type { FastifyInstance, FastifyRequest } from 'fastify';
import type { AuthCache } from '../../app/keys/auth-cache.js';
import { requireScope, type Principal } from '../../app/keys/authenticate.js';
import type { Scope } from '../../app/keys/key-secret.js';
import { apiError } from '../../errors/catalogue.js';

declare module 'fastify' {
  interface FastifyRequest {
    /** The authenticated caller; set on every /v1 request that got past the auth hook. */
    principal: Principal;
  }
  interface FastifyContextConfig {
    /** Scope a /v1 route needs. */
    scope?: Scope;
    /** Media types the route's body may have (quoted in 415 answers). Default application/json. */
    accepts?: readonly string[];
  }
}

/** Read the bearer key from the Authorization header, or throw ERR_AUTH_MISSING_KEY. */
export function bearerKey(request: FastifyRequest): string {
  const header = request.headers.authorization;
  if (typeof header !== 'string') throw apiError('ERR_AUTH_MISSING_KEY');
  const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
  if (!m) throw apiError('ERR_AUTH_MISSING_KEY');
  return m[1];
}

/** Add the auth hook to an encapsulated /v1 context. */
export function installAuth(v1: FastifyInstance, auth: AuthCache): void {
  v1.decorateRequest('principal', null as unknown as Principal);
  v1.addHook('onRequest', async (request) => {
    const principal = await auth.authenticate(bearerKey(request));
    request.principal = principal;
    request.log = request.log.child({ workspaceId: principal.workspaceId, keyPrefix: principal.keyPrefix });
    const scope = request.routeOptions.config.scope ?? (request.method === 'GET' || request.method === 'HEAD' ? 'read' : 'write');
    requireScope(principal, scope);
  });
}

