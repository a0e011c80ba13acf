import { dataError } from '../../errors/data-errors.js';
import { NUL_REASON, booleanOrder, isMissing, NOT_FINITE, readNumber, sortLevels, trimCell } from './cell-values.js';
import type { ColumnDeclaration, ColumnKind, ColumnSchema, IngestLimits, SchemaDeclaration } from './types.js';

/**
 * Integer columns with at most this many distinct values get a note suggesting they may be
 * labels (a rule of thumb, common practice; they are still treated as continuous).
 */
export const FEW_DISTINCT_INTEGERS = 20;

const KINDS: readonly ColumnKind[] = ['continuous', 'binary', 'categorical'];

/** Check the header (names trimmed): count, empty, too long, duplicate. Returns the names. */
export function checkHeader(header: readonly string[], limits: IngestLimits): string[] {
  if (header.length > limits.maxColumns) {
    throw dataError('ERR_DATA_TOO_MANY_COLUMNS', { count: header.length, limit: limits.maxColumns });
  }
  const names = header.map((h) => h.trim());
  const seen = new Map<string, number>();
  for (let j = 0; j < names.length; j++) {
    const name = names[j];
    if (name.length === 0) throw dataError('ERR_DATA_EMPTY_COLUMN_NAME', { position: j + 1 });
    if (name.includes('\u0000')) throw dataError('ERR_DATA_BAD_SCHEMA', { column: `#${j + 1}`, reason: 'the name holds a NUL character (code 0)' });
    if (name.length > limits.maxColumnNameLength) {
      throw dataError('ERR_DATA_COLUMN_NAME_TOO_LONG', { position: j + 1, length: name.length, limit: limits.maxColumnNameLength });
    }
    const first = seen.get(name);
    if (first !== undefined) throw dataError('ERR_DATA_DUPLICATE_COLUMN', { column: name, first: first + 1, second: j + 1 });
    seen.set(name, j);
  }
  return names;
}

/** Rows used for inference: the limit, lowered so that the sample holds at most 1,000,000 cells. */
export function inferenceRowCount(columns: number, limits: IngestLimits): number {
  return Math.max(100, Math.min(limits.inferenceRows, Math.floor(1_000_000 / Math.max(1, columns))));
}

function normaliseDeclarations(names: readonly string[], declared: SchemaDeclaration | undefined, limits: IngestLimits) {
  const out = new Map<string, ColumnDeclaration>();
  if (!declared) return out;
  const known = new Set(names);
  for (const [column, raw] of Object.entries(declared)) {
    const d: ColumnDeclaration = typeof raw === 'string' ? { kind: raw } : raw;
    const bad = (reason: string) => dataError('ERR_DATA_BAD_SCHEMA', { column, reason });
    if (!known.has(column)) throw bad('there is no such column in the header');
    if (!d || !KINDS.includes(d.kind)) throw bad(`kind must be one of ${KINDS.join(', ')}`);
    if (d.levels !== undefined) {
      if (d.kind === 'continuous') throw bad('a continuous column has no levels');
      const levels = d.levels.map((l) => trimCell(String(l)));
      if (levels.some(isMissing)) throw bad('a level may not be empty or NA');
      if (levels.some((l) => l.includes('\u0000'))) throw bad('a level may not hold a NUL character');
      if (new Set(levels).size !== levels.length) throw bad('levels must be distinct');
      if (d.kind === 'binary' && levels.length !== 2) throw bad('a binary column has exactly two levels');
      if (levels.length > limits.maxLevels) throw bad(`at most ${limits.maxLevels} levels are allowed`);
      out.set(column, { kind: d.kind, levels });
    } else out.set(column, { kind: d.kind });
  }
  return out;
}

interface Scan {
  values: number;
  numbers: number;
  integers: boolean;
  nonFiniteRow: number;
  distinct: Set<string>;
  tooMany: boolean;
  tooManyRow: number;
}

function scanColumn(sample: readonly string[][], j: number, name: string, maxLevels: number): Scan {
  const status = new Int32Array(1);
  const scan: Scan = { values: 0, numbers: 0, integers: true, nonFiniteRow: 0, distinct: new Set(), tooMany: false, tooManyRow: 0 };
  for (let r = 0; r < sample.length; r++) {
    const s = trimCell(sample[r][j]);
    if (isMissing(s)) continue;
    scan.values++;
    const v = readNumber(s, status);
    if (status[0] === 0) {
      scan.numbers++;
      if (!Number.isInteger(v)) scan.integers = false;
    } else if (status[0] === NOT_FINITE && scan.nonFiniteRow === 0) scan.nonFiniteRow = r + 1;
    if (!scan.tooMany && !scan.distinct.has(s)) {
      if (s.includes('\u0000')) throw dataError('ERR_DATA_MALFORMED_CSV', { row: r + 1, column: name, reason: NUL_REASON(name) });
      if (scan.distinct.size >= maxLevels) {
        scan.tooMany = true;
        scan.tooManyRow = r + 1;
      } else scan.distinct.add(s);
    }
  }
  return scan;
}

/**
 * Decide each column's kind and initial levels from the first rows (`sample`, already checked
 * for ragged rows). Declared columns keep their kind; others are inferred:
 *  - only numbers, exactly the values 0 and 1 → binary;
 *  - only numbers otherwise → continuous (integers with few distinct values get a note);
 *  - two text labels forming a yes/no pair (true/false, yes/no, y/n, t/f) → binary;
 *  - other text → categorical.
 * NaN or infinite values among numbers are an error; a column over the level limit is too.
 */
export function resolveColumns(
  names: readonly string[],
  sample: readonly string[][],
  declared: SchemaDeclaration | undefined,
  limits: IngestLimits,
): ColumnSchema[] {
  const decl = normaliseDeclarations(names, declared, limits);
  const n = sample.length;
  const rowsNote = `the first ${n} rows`;
  return names.map((name, j) => {
    const sqlColumn = `c${j + 1}`;
    const d = decl.get(name);
    const scan = scanColumn(sample, j, name, limits.maxLevels);
    if (d) {
      let levels = d.levels ? [...d.levels] : undefined;
      if (!levels && d.kind === 'binary') {
        const seen = [...scan.distinct];
        if (scan.tooMany || seen.length > 2) {
          throw dataError('ERR_DATA_NOT_BINARY', { row: firstRowOfThird(sample, j), column: name, levels: JSON.stringify(seen.slice(0, 2)) });
        }
        levels = seen.length === 2 ? (booleanOrder(seen[0], seen[1]) ?? sortLevels(seen)) : completeBinary(seen);
      }
      if (!levels && d.kind === 'categorical') {
        if (scan.tooMany) throw dataError('ERR_DATA_TOO_MANY_LEVELS', { column: name, limit: limits.maxLevels, row: scan.tooManyRow });
        levels = [...scan.distinct];
      }
      return { name, kind: d.kind, levels, levelsDeclared: d.levels !== undefined, inference: `declared ${d.kind}`, sqlColumn };
    }
    if (scan.values === 0) {
      return { name, kind: 'continuous', levelsDeclared: false, sqlColumn, inference: `no values in ${rowsNote}; assumed continuous — declare the kind if it is not` };
    }
    if (scan.nonFiniteRow > 0 && scan.numbers + countNonFinite(sample, j) === scan.values) {
      throw dataError('ERR_DATA_NOT_FINITE', { row: scan.nonFiniteRow, column: name });
    }
    if (scan.numbers === scan.values) {
      const distinctNumbers = new Set([...scan.distinct].map(Number));
      if (distinctNumbers.size === 2 && distinctNumbers.has(0) && distinctNumbers.has(1)) {
        return { name, kind: 'binary', levels: ['0', '1'], levelsDeclared: false, sqlColumn, inference: 'inferred binary: only the values 0 and 1' };
      }
      let note = 'inferred continuous';
      if (scan.integers && !scan.tooMany && distinctNumbers.size <= FEW_DISTINCT_INTEGERS) {
        note = `inferred continuous; ${distinctNumbers.size} distinct integer value${distinctNumbers.size === 1 ? '' : 's'} in ${rowsNote} — declare categorical if they are labels`;
      }
      return { name, kind: 'continuous', levelsDeclared: false, sqlColumn, inference: note };
    }
    if (scan.tooMany) throw dataError('ERR_DATA_TOO_MANY_LEVELS', { column: name, limit: limits.maxLevels, row: scan.tooManyRow });
    const labels = [...scan.distinct];
    if (labels.length === 2) {
      const pair = booleanOrder(labels[0], labels[1]);
      if (pair) {
        return { name, kind: 'binary', levels: pair, levelsDeclared: false, sqlColumn, inference: `inferred binary: "${pair[0]}" = 0, "${pair[1]}" = 1` };
      }
    }
    const mixed = scan.numbers > 0 ? '; holds both numbers and text' : '';
    return {
      name,
      kind: 'categorical',
      levels: labels,
      levelsDeclared: false,
      sqlColumn,
      inference: `inferred categorical: ${labels.length} level${labels.length === 1 ? '' : 's'} in ${rowsNote}${mixed}`,
    };
  });
}

function countNonFinite(sample: readonly string[][], j: number): number {
  const status = new Int32Array(1);
  let k = 0;
  for (const row of sample) {
    const s = trimCell(row[j]);
    if (isMissing(s)) continue;
    readNumber(s, status);
    if (status[0] === NOT_FINITE) k++;
  }
  return k;
}

function firstRowOfThird(sample: readonly string[][], j: number): number {
  const seen = new Set<string>();
  for (let r = 0; r < sample.length; r++) {
    const s = trimCell(sample[r][j]);
    if (isMissing(s)) continue;
    seen.add(s);
    if (seen.size > 2) return r + 1;
  }
  return sample.length;
}

/** Levels of a declared binary column that showed fewer than two labels in the sample. */
function completeBinary(seen: string[]): string[] {
  if (seen.length === 1) {
    for (const pair of [['0', '1'], ['false', 'true'], ['no', 'yes']]) {
      const i = pair.indexOf(seen[0].toLowerCase());
      if (i >= 0) {
        const other = seen[0] === seen[0].toUpperCase() && seen[0] !== seen[0].toLowerCase() ? pair[1 - i].toUpperCase() : pair[1 - i];
        return i === 0 ? [seen[0], other] : [other, seen[0]];
      }
    }
  }
  // Unknown pair: the levels fill in first-seen order while the rows stream (at most two).
  return seen;
}
