import { dataError } from '../../errors/data-errors.js';

/** The start of a record stream: header, the rows read so far, and the rest. */
export interface RecordHead {
  /** Header fields as written (untrimmed). */
  header: string[];
  /** Record batches already read (data rows only), in order. */
  buffered: string[][][];
  /** Data rows in `buffered`. */
  bufferedRows: number;
  /** The remaining record batches. */
  rest: AsyncIterator<string[][]>;
}

/**
 * Read the header and then batches until at least `wantRows(header.length)` data rows are
 * buffered (or the input ends). Throws ERR_DATA_EMPTY_FILE when there is no header.
 */
export async function readHead(records: AsyncIterable<string[][]>, wantRows: (columns: number) => number): Promise<RecordHead> {
  const rest = records[Symbol.asyncIterator]();
  let header: string[] | undefined;
  const buffered: string[][][] = [];
  let bufferedRows = 0;
  let want = 0;
  for (;;) {
    if (header && bufferedRows >= want) break;
    const next = await rest.next();
    if (next.done) break;
    let batch = next.value;
    if (!header) {
      if (batch.length === 0) continue;
      header = batch[0];
      batch = batch.slice(1);
      want = wantRows(header.length);
    }
    if (batch.length > 0) {
      buffered.push(batch);
      bufferedRows += batch.length;
    }
  }
  if (!header) throw dataError('ERR_DATA_EMPTY_FILE');
  return { header, buffered, bufferedRows, rest };
}

/** Encoded chunks of the buffered batches, then of the rest; `encode` throws on bad rows. */
export async function* encodeAll(head: RecordHead, encode: (batch: string[][]) => string): AsyncGenerator<string> {
  while (head.buffered.length > 0) {
    const chunk = encode(head.buffered.shift() as string[][]);
    if (chunk.length > 0) yield chunk;
  }
  for (;;) {
    const next = await head.rest.next();
    if (next.done) return;
    if (next.value.length === 0) continue;
    yield encode(next.value);
  }
}
