import type { BatchColumnStats, BatchStats } from '../../store/dataset-types.js';
import type { ColumnSchema, ColumnStats } from './types.js';

/**
 * Merge two continuous summaries with the pairwise update of Chan, Golub & LeVeque (1979,
 * "Updating formulae and a pairwise algorithm for computing sample variances").
 */
function mergeContinuous(
  a: Extract<BatchColumnStats, { kind: 'continuous' }>,
  b: Extract<BatchColumnStats, { kind: 'continuous' }>,
): Extract<BatchColumnStats, { kind: 'continuous' }> {
  const n = a.count + b.count;
  if (a.count === 0) return { ...b, missing: a.missing + b.missing };
  if (b.count === 0) return { ...a, missing: a.missing + b.missing };
  const delta = b.mean - a.mean;
  return {
    kind: 'continuous',
    count: n,
    missing: a.missing + b.missing,
    mean: a.mean + (delta * b.count) / n,
    m2: a.m2 + b.m2 + (delta * delta * a.count * b.count) / n,
    min: Math.min(a.min as number, b.min as number),
    max: Math.max(a.max as number, b.max as number),
  };
}

/** Dataset-wide public statistics of `column` from the stats of every batch. */
export function mergeColumnStats(column: ColumnSchema, batches: readonly BatchStats[]): ColumnStats {
  if (column.kind === 'continuous') {
    let acc: Extract<BatchColumnStats, { kind: 'continuous' }> = { kind: 'continuous', count: 0, missing: 0, mean: 0, m2: 0, min: null, max: null };
    for (const b of batches) {
      const s = b[column.sqlColumn];
      if (s && s.kind === 'continuous') acc = mergeContinuous(acc, s);
    }
    return {
      kind: 'continuous',
      count: acc.count,
      missing: acc.missing,
      mean: acc.count > 0 ? acc.mean : null,
      sd: acc.count > 1 ? Math.sqrt(acc.m2 / (acc.count - 1)) : null,
      min: acc.count > 0 ? acc.min : null,
      max: acc.count > 0 ? acc.max : null,
    };
  }
  let count = 0;
  let missing = 0;
  const byLevel = new Map<string, number>((column.levels ?? []).map((l) => [l, 0]));
  for (const b of batches) {
    const s = b[column.sqlColumn];
    if (!s || s.kind === 'continuous') continue;
    count += s.count;
    missing += s.missing;
    for (const [level, k] of Object.entries(s.counts)) byLevel.set(level, (byLevel.get(level) ?? 0) + k);
  }
  return { kind: column.kind, count, missing, levels: [...byLevel].map(([level, c]) => ({ level, count: c })) };
}
