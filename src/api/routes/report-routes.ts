/**
 * Model report pages and the signed links that open them.
 *
 *  - `reportLinkRoutes` (register inside the /v1 context, behind the auth hook):
 *    POST /v1/models/:id/versions/:version/report-links {expiresInMinutes?} with a `read` key
 *    mints a link to that one version's report (the version is pinned by id, so "current"
 *    or a number resolves once, when the link is made).
 *  - `reportPageRoutes` (register at the root, outside /v1; no Authorization header):
 *    GET /reports/:token → the report page (text/html). The token grants that one version's
 *    page and nothing else; the query string only chooses the question asked of it.
 *    Refused tokens: altered or malformed → 404 ERR_REPORT_LINK_INVALID; correctly signed but
 *    expired → 403 ERR_REPORT_LINK_EXPIRED (problem+json, see errors/report-errors.ts).
 *    The page is sent with a Content-Security-Policy that forbids every script and every
 *    external load (only inline styles and data: images), no caching and no referrer.
 */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import type { ModelsService } from '../../app/models/models-service.js';
import type { QueriesService } from '../../app/queries/queries-service.js';
import { gatherReport, type ReportQuestionInput } from '../../app/reports/report-data.js';
import { reportError } from '../../errors/report-errors.js';
import { DEFAULT_LINK_MINUTES, linkExpiry, MAX_LINK_MINUTES, ReportLinkError, signReportLink, verifyReportLink } from '../../app/reports/report-links.js';
import { apiError } from '../../errors/catalogue.js';
import { renderReport } from '../report/render-report.js';

/** Options of both report plugins. */
export interface ReportRoutesOptions {
  models: ModelsService;
  queries: QueriesService;
  /** Server secret that signs report links (config FULCRUM_LINK_SECRET, at least 16 bytes). */
  secret: string;
  /** Public origin for minted URLs, e.g. https://fulcrum.example.com. Default: the request's protocol and Host. */
  publicBaseUrl?: string;
  /** Clock in ms (tests). Default Date.now. */
  now?: () => number;
}

/** The report page's Content-Security-Policy: no script, no external load of any kind. */
export const REPORT_CSP = [
  "default-src 'none'",
  "script-src 'none'",
  "style-src 'unsafe-inline'",
  'img-src data:',
  "font-src 'none'",
  "connect-src 'none'",
  "object-src 'none'",
  "frame-src 'none'",
  "base-uri 'none'",
  "form-action 'self'",
  "frame-ancestors 'none'",
].join('; ');

const VersionParams = z.object({ id: z.string().min(1).max(100), version: z.string().min(1).max(100) });
const LinkBody = z
  .object({
    expiresInMinutes: z
      .number()
      .int()
      .min(1)
      .max(MAX_LINK_MINUTES)
      .default(DEFAULT_LINK_MINUTES)
      .describe(`Lifetime of the link in minutes (default ${DEFAULT_LINK_MINUTES}, at most ${MAX_LINK_MINUTES} = 7 days).`),
  })
  .strict();
const LinkView = z.object({
  url: z.string(),
  path: z.string(),
  expiresAt: z.string(),
  model: z.object({ id: z.string(), version: z.number(), versionId: z.string() }),
});

export const reportLinkRoutes: FastifyPluginAsyncZod<ReportRoutesOptions> = async (app, opts) => {
  const now = opts.now ?? Date.now;
  app.post(
    '/models/:id/versions/:version/report-links',
    {
      config: { scope: 'read' },
      schema: {
        tags: ['reports'],
        summary: 'Mint a signed, expiring, read-only link to one version’s report page',
        description:
          'The link opens GET /reports/{token} without an Authorization header and grants that one version’s report and nothing else. `version` is a number, an id or "current" (resolved now).',
        params: VersionParams,
        body: LinkBody.nullish(),
        response: { 201: LinkView },
      },
    },
    async (request, reply) => {
      const ws = request.principal.workspaceId;
      const v = await opts.models.version(ws, request.params.id, request.params.version);
      const expiresAt = linkExpiry(now(), request.body?.expiresInMinutes ?? DEFAULT_LINK_MINUTES);
      const token = signReportLink(opts.secret, { workspaceId: ws, modelId: v.modelId, versionId: v.id, expiresAt });
      const path = `/reports/${token}`;
      const base = (opts.publicBaseUrl ?? `${request.protocol}://${request.host}`).replace(/\/+$/, '');
      reply.code(201);
      return { url: `${base}${path}`, path, expiresAt: new Date(expiresAt * 1000).toISOString(), model: { id: v.modelId, version: v.number, versionId: v.id } };
    },
  );
};

const Text = z.string().max(2000).optional();
const PageQuery = z.object({ treatment: Text, outcome: Text, arms: Text, reference: Text, by: Text, better: Text, costs: Text });

/** Split a comma list; empty → undefined. */
const listOf = (s: string | undefined): string[] | undefined => {
  const xs = (s ?? '').split(',').map((x) => x.trim()).filter((x) => x.length > 0);
  return xs.length > 0 ? xs : undefined;
};
const blank = (s: string | undefined): string | undefined => (s === undefined || s.trim() === '' ? undefined : s.trim());

/** The page's query string as a question (comma lists split; a bad `better` or `costs` is a 400). */
export function parseReportQuery(q: z.infer<typeof PageQuery>): ReportQuestionInput {
  const better = blank(q.better);
  if (better !== undefined && better !== 'higher' && better !== 'lower') {
    throw apiError('ERR_REQUEST_INVALID', { reason: `better must be "higher" or "lower", got "${better.slice(0, 40)}".` });
  }
  const costs = listOf(q.costs)?.map(Number);
  if (costs && costs.some((c) => !Number.isFinite(c))) throw apiError('ERR_REQUEST_INVALID', { reason: 'costs must be comma-separated numbers, one per arm.' });
  return {
    treatment: blank(q.treatment),
    outcome: blank(q.outcome),
    arms: listOf(q.arms),
    reference: blank(q.reference),
    by: listOf(q.by),
    better: better as 'higher' | 'lower' | undefined,
    costs,
  };
}

export const reportPageRoutes: FastifyPluginAsyncZod<ReportRoutesOptions> = async (app, opts) => {
  const now = opts.now ?? Date.now;
  app.get(
    '/reports/:token',
    {
      schema: {
        tags: ['reports'],
        summary: 'A model version’s report page (HTML), opened by a signed link; no Authorization header',
        description:
          'Query parameters choose the question: treatment, outcome, arms (comma list), reference, by (comma list of segment variables), better (higher|lower), costs (comma list, one per arm). Defaults come from the model. 404 for an altered link, 403 for an expired one.',
        params: z.object({ token: z.string().min(1).max(1024) }),
        querystring: PageQuery,
      },
    },
    async (request, reply) => {
      let claims;
      try {
        claims = verifyReportLink(opts.secret, request.params.token, now());
      } catch (e) {
        if (e instanceof ReportLinkError) {
          if (e.reason === 'expired') throw reportError('ERR_REPORT_LINK_EXPIRED', { expiredAt: new Date((e.expiredAt ?? 0) * 1000).toISOString() });
          throw reportError('ERR_REPORT_LINK_INVALID');
        }
        throw e;
      }
      const data = await gatherReport(opts, claims, parseReportQuery(request.query));
      const html = renderReport(data);
      reply
        .header('content-type', 'text/html; charset=utf-8')
        .header('content-security-policy', REPORT_CSP)
        .header('cache-control', 'private, no-store')
        .header('referrer-policy', 'no-referrer')
        .header('x-robots-tag', 'noindex, nofollow');
      return html;
    },
  );
};
