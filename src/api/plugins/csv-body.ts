/**
 * Streamed uploads. `text/csv` bodies are handed to the route as the raw request stream (never
 * buffered); a byte counter in front of the consumer refuses a body over the upload limit with
 * 413 as soon as the limit is passed, aborting the load (the use case rolls back).
 */
import { Transform, type Readable, type TransformCallback } from 'node:stream';
import type { FastifyInstance } from 'fastify';
import { apiError } from '../../errors/catalogue.js';
import type { FulcrumError } from '../../errors/fulcrum-error.js';

/** A pass-through stream that fails with ERR_REQUEST_BODY_TOO_LARGE past `limit` bytes. */
export class ByteLimit extends Transform {
  /** Bytes seen so far. */
  bytes = 0;
  /** The 413 error once the limit was passed (so a handler can rethrow it). */
  exceeded: FulcrumError | null = null;

  constructor(readonly limit: number) {
    super();
  }

  override _transform(chunk: Buffer, _enc: BufferEncoding, done: TransformCallback): void {
    this.bytes += chunk.length;
    if (this.bytes > this.limit) {
      this.exceeded = apiError('ERR_REQUEST_BODY_TOO_LARGE', { limit: this.limit });
      done(this.exceeded);
      return;
    }
    done(null, chunk);
  }
}

/** Pipe a source through a ByteLimit; errors of the source are forwarded. */
export function limitBytes(source: Readable, limit: number): ByteLimit {
  const limiter = new ByteLimit(limit);
  source.on('error', (err) => limiter.destroy(err));
  return source.pipe(limiter);
}

/**
 * Register the text/csv parser on a context: the body stays the raw stream. A declared
 * Content-Length over the limit is refused before a byte is read.
 */
export function installCsvBody(app: FastifyInstance, uploadLimit: number): void {
  app.addContentTypeParser('text/csv', (request, payload, done) => {
    const declared = Number(request.headers['content-length']);
    if (Number.isFinite(declared) && declared > uploadLimit) {
      done(apiError('ERR_REQUEST_BODY_TOO_LARGE', { limit: uploadLimit }), undefined);
      return;
    }
    done(null, payload);
  });
}
