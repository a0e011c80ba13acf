/**
 * The one error type that crosses layer boundaries above the engine.
 *
 * `code` is a stable identifier of the form `ERR_<AREA>_<PROBLEM>`; the HTTP error handler
 * turns it into the problem+json `type`. `status` is the HTTP status the api answers with.
 * `detail` carries structured, non-sensitive facts (row, column, limit) — never data values or keys.
 */
export class FulcrumError extends Error {
  constructor(
    readonly code: string /* ERR_<AREA>_<PROBLEM>, becomes the problem+json type */,
    readonly status: number,
    message: string,
    readonly detail?: Record<string, unknown>,
  ) {
    super(message);
    this.name = 'FulcrumError';
  }
}
