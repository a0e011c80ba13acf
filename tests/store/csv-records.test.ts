import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { csvRecords } from '../../src/app/datasets/csv-records.js';
import { Rng } from '../../src/core/random/rng.js';

async function readAll(chunks: (string | Buffer)[]): Promise<string[][]> {
  const out: string[][] = [];
  async function* src() {
    yield* chunks;
  }
  for await (const batch of csvRecords(src())) out.push(...batch);
  return out;
}

function split(bytes: Buffer, rng: Rng): Buffer[] {
  const parts: Buffer[] = [];
  let i = 0;
  while (i < bytes.length) {
    const n = 1 + rng.int(17);
    parts.push(bytes.subarray(i, i + n));
    i += n;
  }
  return parts;
}

const FIELD_PIECES = ['a', 'Zoë', '€', '1.5', ' ', ',', '"', '\n', '\r\n', 'NA', '', 'héllo wörld'];

function randomCsv(rng: Rng, rows: number, cols: number): string {
  const lines: string[] = [];
  for (let r = 0; r < rows; r++) {
    const fields: string[] = [];
    for (let c = 0; c < cols; c++) {
      let f = '';
      const k = rng.int(4);
      for (let i = 0; i < k; i++) f += FIELD_PIECES[rng.int(FIELD_PIECES.length)];
      fields.push(/[",\r\n]/.test(f) || (f.length > 0 && rng.uniform() < 0.2) ? `"${f.replace(/"/g, '""')}"` : f);
    }
    lines.push(fields.join(','));
  }
  // One line end per file: csv-parse detects the record delimiter from the first line.
  const eol = rng.uniform() < 0.5 ? '\n' : '\r\n';
  return lines.join(eol) + eol;
}

describe('csvRecords', () => {
  it('reads quoted fields with commas, doubled quotes and line breaks', async () => {
    const text = 'a,b,c\r\n1,"x, y","say ""hi"""\n2,"two\nlines",\n';
    expect(await readAll([text])).toEqual([
      ['a', 'b', 'c'],
      ['1', 'x, y', 'say "hi"'],
      ['2', 'two\nlines', ''],
    ]);
  });

  it('drops a byte-order mark, skips blank lines and reads a last line without a line end', async () => {
    expect(await readAll(['\ufeffa,b\n\n1,2\r\n\r\n3,4'])).toEqual([
      ['a', 'b'],
      ['1', '2'],
      ['3', '4'],
    ]);
  });

  it('agrees with csv-parse on random quoted CSV split into random byte chunks (UTF-8 split mid-character)', async () => {
    const rng = Rng.create(7);
    for (let trial = 0; trial < 40; trial++) {
      const text = randomCsv(rng, 1 + rng.int(30), 1 + rng.int(6));
      const expected = (parse(text, { relax_column_count: true, skip_empty_lines: true }) as string[][]).filter(
        (r) => !(r.length === 1 && r[0] === ''),
      );
      expect(await readAll(split(Buffer.from(text), rng))).toEqual(expected);
    }
  });

  it('refuses an unterminated quote and text after a closing quote, naming the row', async () => {
    await expect(readAll(['a,b\n1,"open\n'])).rejects.toMatchObject({ code: 'ERR_DATA_MALFORMED_CSV', detail: { row: 1 } });
    await expect(readAll(['a,b\n1,2\n3,"x"y\n'])).rejects.toMatchObject({ code: 'ERR_DATA_MALFORMED_CSV', detail: { row: 2 } });
  });
});
