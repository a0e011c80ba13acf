import { dataError } from '../../errors/data-errors.js';

/**
 * Streaming CSV reader (RFC 4180: comma separated, `"` quoting with `""` escapes, quoted
 * fields may hold commas and line breaks; LF or CRLF line ends; a UTF-8 byte-order mark is
 * dropped; blank lines are skipped). Yields the records of each input chunk as one array,
 * so memory holds one chunk at a time. Lines without quotes take a fast split path.
 */
export async function* csvRecords(source: AsyncIterable<Buffer | Uint8Array | string>): AsyncGenerator<string[][]> {
  const decoder = new TextDecoder('utf-8');
  const state = { records: 0 };
  let buf = '';
  let first = true;
  for await (const chunk of source) {
    let text = typeof chunk === 'string' ? chunk : decoder.decode(chunk, { stream: true });
    if (first && text.length > 0) {
      if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
      first = false;
    }
    buf = buf.length === 0 ? text : buf + text;
    const out: string[][] = [];
    buf = buf.slice(parseRecords(buf, out, false, state));
    if (out.length > 0) yield out;
  }
  buf += decoder.decode();
  const out: string[][] = [];
  parseRecords(buf, out, true, state);
  if (out.length > 0) yield out;
}

/** Parse whole records from `s` into `out`; returns how many characters were consumed. */
function parseRecords(s: string, out: string[][], eof: boolean, state: { records: number }): number {
  let pos = 0;
  let quote = s.indexOf('"');
  const n = s.length;
  while (pos < n) {
    const nl = s.indexOf('\n', pos);
    if (nl < 0 && !eof) break;
    const end = nl < 0 ? n : nl;
    if (quote >= 0 && quote < pos) quote = s.indexOf('"', pos);
    if (quote < 0 || quote >= end) {
      let lineEnd = end;
      if (lineEnd > pos && s.charCodeAt(lineEnd - 1) === 13) lineEnd--;
      if (lineEnd > pos) {
        out.push(s.slice(pos, lineEnd).split(','));
        state.records++;
      }
      pos = end + 1;
      continue;
    }
    const next = parseQuotedRecord(s, pos, eof, out, state);
    if (next < 0) break;
    pos = next;
  }
  return Math.min(pos, n);
}

/**
 * Parse one record that contains a quote, starting at `pos`. Returns the index after its line
 * end, or -1 when the record runs past the buffer and more input may follow.
 */
function parseQuotedRecord(s: string, pos: number, eof: boolean, out: string[][], state: { records: number }): number {
  const n = s.length;
  const fields: string[] = [];
  let i = pos;
  for (;;) {
    let field: string;
    if (s.charCodeAt(i) === 34) {
      field = '';
      let j = i + 1;
      for (;;) {
        const k = s.indexOf('"', j);
        if (k < 0 || (k === n - 1 && !eof)) {
          if (eof) throw malformed(state, 'a quoted field is not closed before the end of the file');
          return -1;
        }
        if (s.charCodeAt(k + 1) === 34) {
          field += s.slice(j, k + 1);
          j = k + 2;
          continue;
        }
        field += s.slice(j, k);
        i = k + 1;
        break;
      }
      const c = s.charCodeAt(i);
      if (i < n && c !== 44 && c !== 10 && !(c === 13 && (s.charCodeAt(i + 1) === 10 || i + 1 === n))) {
        throw malformed(state, 'characters follow a closing quote; quote the whole field and double any quote inside it');
      }
      if (c === 13 && i + 1 === n && !eof) return -1;
      if (c === 13) i++;
    } else {
      let j = i;
      while (j < n) {
        const c = s.charCodeAt(j);
        if (c === 44 || c === 10) break;
        j++;
      }
      if (j === n && !eof) return -1;
      let e = j;
      if (e > i && s.charCodeAt(e - 1) === 13 && (j === n || s.charCodeAt(j) === 10)) e--;
      field = s.slice(i, e);
      i = j;
    }
    fields.push(field);
    if (i >= n) {
      if (!eof) return -1;
      break;
    }
    if (s.charCodeAt(i) === 44) {
      i++;
      continue;
    }
    i++; // the line feed
    break;
  }
  out.push(fields);
  state.records++;
  return i >= n ? n : i;
}

function malformed(state: { records: number }, reason: string) {
  return dataError('ERR_DATA_MALFORMED_CSV', { row: state.records, reason });
}
