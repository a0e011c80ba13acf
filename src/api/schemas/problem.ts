/** The problem+json shape every error answers with, for the OpenAPI document. */
import { z } from 'zod';

export const ProblemSchema = z
  .looseObject({
    type: z.string().describe('Stable error code, e.g. ERR_DATA_RAGGED_ROW (see the error catalogue).'),
    title: z.string(),
    status: z.number().int(),
    detail: z.string().describe('What went wrong and what to change; names the row and column for data errors.'),
    instance: z.string().describe('The request path.'),
    requestId: z.string(),
  })
  .describe('application/problem+json (RFC 9457). Extension members such as row, column or limit may follow.');

/**
 * Add the problem+json error responses to a route's response map (documentation only: the
 * error handler sends problems as ready-made JSON text, which fastify does not re-serialise).
 */
export function withProblems<T extends Record<number, z.ZodType>>(responses: T) {
  return { ...responses, '4XX': ProblemSchema, '5XX': ProblemSchema };
}
