/**
 * Effect questions on a model, answered from its current (or a pinned) version without
 * refitting: ATE/CATE, uplift tables by segment, what-if on posted units. These are POSTs
 * (the question is a JSON document) but only need the read scope.
 */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import type { QueriesService } from '../../app/queries/queries-service.js';
import type { EffectQuery } from '../../core/effects/ate.js';
import type { UpliftQuery } from '../../core/effects/uplift.js';
import { Answer, EffectBody, ModelIdParams, UpliftBody, versionRef, WhatIfBody } from '../schemas/effects.js';
import type { WhatIfQuery } from '../../core/effects/what-if.js';

export interface EffectsRouteOptions {
  queries: QueriesService;
}

export const effectsRoutes: FastifyPluginAsyncZod<EffectsRouteOptions> = async (app, { queries }) => {
  const tags = ['effects'];

  app.post(
    '/models/:id/effect',
    {
      config: { scope: 'read' },
      schema: {
        tags,
        summary: 'Effect of one arm against a reference on an outcome: ATE, or CATE for a segment',
        description:
          'Answers carry the estimate with its interval (over the graph set; per graph, the larger of the Monte Carlo and the cross-check sampling error, widened by the gap between simulation and cross-check), the per-graph breakdown, the AIPW cross-check per graph and disagreements, positivity flags, the probability that a causal path exists, and plain-language cautions.',
        params: ModelIdParams,
        body: EffectBody,
        response: { 200: Answer },
      },
    },
    async (request) => {
      const { version, ...q } = request.body;
      return queries.effect(request.principal.workspaceId, request.params.id, q as EffectQuery, versionRef(version));
    },
  );

  app.post(
    '/models/:id/uplift',
    {
      config: { scope: 'read' },
      schema: {
        tags,
        summary: 'Uplift table: several arms by segment, the recommended arm per segment (with optional costs) and the policy’s value',
        params: ModelIdParams,
        body: UpliftBody,
        response: { 200: Answer },
      },
    },
    async (request) => {
      const { version, ...q } = request.body;
      return queries.uplift(request.principal.workspaceId, request.params.id, q as UpliftQuery, versionRef(version));
    },
  );

  app.post(
    '/models/:id/what-if',
    {
      config: { scope: 'read' },
      schema: {
        tags,
        summary: 'What-if for given units: each posted row’s predicted outcome under each arm, and the effects against the reference arm',
        description:
          'Values a row gives are kept (pre-treatment) or used to infer its unit-specific noise; missing or null values are drawn from the model given what the row does say. At most 1000 rows.',
        params: ModelIdParams,
        body: WhatIfBody,
        response: { 200: Answer },
      },
    },
    async (request) => {
      const { version, rows, crossCheck: _unused, ...q } = request.body;
      return queries.whatIf(request.principal.workspaceId, request.params.id, rows, q as WhatIfQuery, versionRef(version));
    },
  );
};
