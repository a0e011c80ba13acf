/**
 * OpenAPI 3 document generated from the same zod schemas that validate requests, served as
 * JSON at /docs/json and as a browsable page at /docs.
 */
import swagger from '@fastify/swagger';
import swaggerUi from '@fastify/swagger-ui';
import type { FastifyInstance } from 'fastify';
import { createJsonSchemaTransform } from 'fastify-type-provider-zod';

const DOCS_PREFIX = '/docs';

const zodTransform = createJsonSchemaTransform({
  skipList: [`${DOCS_PREFIX}/`, `${DOCS_PREFIX}/initOAuth`, `${DOCS_PREFIX}/json`, `${DOCS_PREFIX}/uiConfig`, `${DOCS_PREFIX}/yaml`, `${DOCS_PREFIX}/*`, `${DOCS_PREFIX}/static/*`],
});

type TransformInput = Parameters<typeof zodTransform>[0];
type ContentBody = { content: Record<string, { schema: unknown }> };

const hasContent = (body: unknown): body is ContentBody =>
  typeof body === 'object' && body !== null && 'content' in body && typeof (body as ContentBody).content === 'object';

/**
 * The zod transform, extended to bodies declared per content type (`body: {content: {...}}`,
 * used by routes that take JSON, CSV and multipart): each media type's zod schema is converted
 * on its own, a non-zod schema (plain JSON schema) is kept as it is.
 */
function transform(input: TransformInput): ReturnType<typeof zodTransform> {
  const schema = input.schema as Record<string, unknown> | undefined;
  if (!schema || !hasContent(schema.body)) return zodTransform(input);
  const { body, ...rest } = schema as { body: ContentBody };
  const out = zodTransform({ ...input, schema: rest } as TransformInput);
  const content: Record<string, { schema: unknown }> = {};
  for (const [media, entry] of Object.entries(body.content)) {
    const isZod = typeof entry.schema === 'object' && entry.schema !== null && '_zod' in entry.schema;
    if (!isZod) {
      content[media] = entry;
      continue;
    }
    const one = zodTransform({ ...input, schema: { body: entry.schema } } as TransformInput);
    content[media] = { schema: (one.schema as { body: unknown }).body };
  }
  return { ...out, schema: { ...(out.schema as object), body: { content } } } as ReturnType<typeof zodTransform>;
}

/** Register @fastify/swagger and the /docs page (before the routes, so it sees them all). */
export async function installOpenApi(app: FastifyInstance, version: string): Promise<void> {
  await app.register(swagger, {
    openapi: {
      openapi: '3.0.3',
      info: {
        title: 'Fulcrum',
        version,
        description:
          'Causal decision service. Every /v1 route needs `Authorization: Bearer <key>`; errors are application/problem+json (RFC 9457) whose `type` is a stable code.',
      },
      components: { securitySchemes: { bearer: { type: 'http', scheme: 'bearer' } } },
      security: [{ bearer: [] }],
    },
    transform,
  });
  await app.register(swaggerUi, { routePrefix: DOCS_PREFIX, uiConfig: { docExpansion: 'list' } });
}
