import { dataError } from '../../errors/data-errors.js';
import { NUL_REASON, csvQuote, isMissing, NOT_A_NUMBER, readNumber, sortLevels, trimCell } from './cell-values.js';
import type { BatchStats } from '../../store/dataset-types.js';
import type { ColumnSchema, IngestLimits } from './types.js';

const CONTINUOUS = 0;
const BINARY = 1;
const CATEGORICAL = 2;

interface LevelEntry {
  count: number;
  /** The label as written into COPY CSV (quoted when needed). */
  csv: string;
}

/**
 * True when PostgreSQL's float8 input reads `s` as JavaScript read it (`v`). Not so for an
 * underflow to zero ("1e-400": PostgreSQL refuses it) or for white space JavaScript skips and
 * PostgreSQL does not (no-break space); those cells are written as `String(v)` instead.
 */
function pgReadsAsIs(s: string, v: number): boolean {
  if (v === 0) return s.length === 1;
  const a = s.charCodeAt(0);
  const b = s.charCodeAt(s.length - 1);
  return (a === 43 || a === 45 || a === 46 || (a >= 48 && a <= 57)) && (b === 46 || (b >= 48 && b <= 57));
}

/** Per-column running state; one object per column, touched once per cell. */
interface ColumnState {
  kind: number;
  schema: ColumnSchema;
  missing: number;
  // continuous (Welford's running mean and sum of squared deviations)
  n: number;
  mean: number;
  m2: number;
  min: number;
  max: number;
  // binary and categorical
  levels: string[];
  entries: Map<string, LevelEntry>;
  /** Number of levels that existed before this batch (appends keep their order). */
  storedLevels: number;
  numericBinary: boolean;
}

/**
 * Validates rows against the columns' kinds and turns them into COPY CSV lines
 * `batch,row_no,c…` (continuous: the number as written; binary: 0/1; categorical: the label),
 * collecting each column's statistics on the way. Throws a data error naming the row
 * (counted from 1 in this upload) and the column at the first bad cell.
 */
export class RowEncoder {
  /** Rows encoded so far. */
  rows = 0;
  private readonly cols: ColumnState[];
  private readonly status = new Int32Array(1);

  /**
   * @param columns the upload's columns in the order its rows hold them
   * @param batch the batch number written in every row
   * @param firstRow row_no of the first row (rows are numbered across the dataset)
   * @param origin how the kinds were decided, for messages ("inferred from the first 5000 rows")
   */
  constructor(
    columns: readonly ColumnSchema[],
    private readonly batch: number,
    private readonly firstRow: number,
    private readonly limits: IngestLimits,
    private readonly origin: string,
  ) {
    this.cols = columns.map((schema) => {
      const kind = schema.kind === 'continuous' ? CONTINUOUS : schema.kind === 'binary' ? BINARY : CATEGORICAL;
      const levels = [...(schema.levels ?? [])];
      const entries = new Map<string, LevelEntry>();
      for (let i = 0; i < levels.length; i++) entries.set(levels[i], { count: 0, csv: kind === BINARY ? String(i) : csvQuote(levels[i]) });
      return {
        kind,
        schema,
        missing: 0,
        n: 0,
        mean: 0,
        m2: 0,
        min: Infinity,
        max: -Infinity,
        levels,
        entries,
        storedLevels: levels.length,
        numericBinary: kind === BINARY && levels[0] === '0' && (levels.length < 2 || levels[1] === '1'),
      };
    });
  }

  /**
   * Encode whole records into one COPY CSV chunk. The cells of `records` are replaced by
   * their encoded text (the arrays are consumed), so each line is one `join`.
   */
  encode(records: string[][]): string {
    const cols = this.cols;
    const nc = cols.length;
    const prefix = `${this.batch},`;
    const lines: string[] = new Array(records.length);
    for (let r = 0; r < records.length; r++) {
      const rec = records[r];
      const row = this.rows + 1;
      if (rec.length !== nc) throw dataError('ERR_DATA_RAGGED_ROW', { row, fields: rec.length, columns: nc });
      for (let j = 0; j < nc; j++) {
        const c = cols[j];
        const s = trimCell(rec[j]);
        if (s.length === 0 || s === 'NA') {
          c.missing++;
          rec[j] = '';
          continue;
        }
        if (c.kind === CONTINUOUS) {
          const v = readNumber(s, this.status);
          if (this.status[0] !== 0) {
            throw dataError(this.status[0] === NOT_A_NUMBER ? 'ERR_DATA_NOT_A_NUMBER' : 'ERR_DATA_NOT_FINITE', {
              row,
              column: c.schema.name,
              origin: c.schema.inference.startsWith('declared') ? 'declared' : this.origin,
            });
          }
          const n = ++c.n;
          const d = v - c.mean;
          c.mean += d / n;
          c.m2 += d * (v - c.mean);
          if (v < c.min) c.min = v;
          if (v > c.max) c.max = v;
          rec[j] = pgReadsAsIs(s, v) ? s : String(v);
        } else {
          let e = c.entries.get(s);
          if (e === undefined) e = this.newLevel(c, s, row);
          e.count++;
          rec[j] = e.csv;
        }
      }
      lines[r] = prefix + (this.firstRow + this.rows) + ',' + rec.join(',');
      this.rows++;
    }
    return lines.length > 0 ? lines.join('\n') + '\n' : '';
  }

  private newLevel(c: ColumnState, s: string, row: number): LevelEntry {
    const name = c.schema.name;
    if (c.kind === BINARY) {
      if (c.numericBinary) {
        const v = readNumber(s, this.status);
        if (this.status[0] === 0 && (v === 0 || v === 1)) {
          const e = c.entries.get(String(v));
          if (e) return e;
        }
      }
      if (c.schema.levelsDeclared) throw dataError('ERR_DATA_UNKNOWN_LEVEL', { row, column: name, levels: JSON.stringify(c.levels) });
      if (c.levels.length >= 2) throw dataError('ERR_DATA_NOT_BINARY', { row, column: name, levels: JSON.stringify(c.levels) });
      const e = { count: 0, csv: String(c.levels.length) };
      c.levels.push(s);
      c.entries.set(s, e);
      return e;
    }
    if (c.schema.levelsDeclared) throw dataError('ERR_DATA_UNKNOWN_LEVEL', { row, column: name, levels: JSON.stringify(c.levels) });
    if (s.includes('\u0000')) throw dataError('ERR_DATA_MALFORMED_CSV', { row, column: name, reason: NUL_REASON(name) });
    if (c.levels.length >= this.limits.maxLevels) throw dataError('ERR_DATA_TOO_MANY_LEVELS', { column: name, limit: this.limits.maxLevels, row });
    const e = { count: 0, csv: csvQuote(s) };
    c.levels.push(s);
    c.entries.set(s, e);
    return e;
  }

  /** The batch's statistics, keyed by generated column name. */
  stats(): BatchStats {
    const out: BatchStats = {};
    for (const c of this.cols) {
      const key = c.schema.sqlColumn;
      if (c.kind === CONTINUOUS) {
        out[key] = {
          kind: 'continuous',
          count: c.n,
          missing: c.missing,
          mean: c.mean,
          m2: c.m2,
          min: c.n > 0 ? c.min : null,
          max: c.n > 0 ? c.max : null,
        };
      } else {
        const counts: Record<string, number> = {};
        let count = 0;
        for (const [label, e] of c.entries) {
          if (e.count === 0) continue;
          counts[label] = e.count;
          count += e.count;
        }
        out[key] = { kind: c.schema.kind as 'binary' | 'categorical', count, missing: c.missing, counts };
      }
    }
    return out;
  }

  /**
   * Each column's schema with its levels after this batch. Binary keeps code order; for a
   * categorical column without declared levels, stored levels keep their order and new ones
   * follow, sorted (on a new dataset, when `sortAll`, every level is sorted).
   */
  columns(sortAll: boolean): ColumnSchema[] {
    return this.cols.map((c) => {
      if (c.kind === CONTINUOUS) return c.schema;
      if (c.kind === BINARY || c.schema.levelsDeclared) return { ...c.schema, levels: [...c.levels] };
      const keep = sortAll ? 0 : c.storedLevels;
      return { ...c.schema, levels: [...c.levels.slice(0, keep), ...sortLevels(c.levels.slice(keep))] };
    });
  }
}
