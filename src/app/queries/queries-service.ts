/**
 * Effect queries, answered from compiled versions without refitting: an LRU of loaded
 * versions (each with its EffectCache of simulated per-unit outcomes), filled from the
 * database on a miss. Any version a query sees is complete: versions are immutable and the
 * model's current pointer moves only after a version is committed.
 *
 * Bad questions are 4xx with a message that says what to change: unknown variables or arms,
 * segments on descendants of the treatment, segments with too few reference rows.
 */
import { LRUCache } from 'lru-cache';
import type { Arm } from '../../core/effects/arms.js';
import { estimateEffect, type EffectEstimate, type EffectQuery } from '../../core/effects/ate.js';
import { EffectCache } from '../../core/effects/effect-cache.js';
import { resolveSegment, expandSegments, SegmentError, type Segment, type SegmentBy } from '../../core/effects/segments.js';
import { upliftTable, type UpliftQuery, type UpliftTable } from '../../core/effects/uplift.js';
import { whatIf, type WhatIfQuery, type WhatIfResult } from '../../core/effects/what-if.js';
import { Rng } from '../../core/random/rng.js';
import { KIND_CONTINUOUS, type CompiledModel } from '../../core/scm/compiled-model.js';
import { QueryRefusalError } from '../../core/scm/query-refusal.js';
import { deserialise } from '../../core/scm/serialise.js';
import { modelError } from '../../errors/model-errors.js';
import type { ModelsService } from '../models/models-service.js';
import type { VersionMeta } from '../../store/models-repository.js';

/** Fewest reference rows a segment needs (common practice: below ~20 units a mean is too noisy to act on). */
export const MIN_SEGMENT_ROWS = 20;

export interface QueriesOptions {
  /** Compiled versions kept in memory. Default 32. */
  maxVersions?: number;
  /** How long the "current version" of a model is remembered, in ms. Default 500. */
  currentTtlMs?: number;
}

/** What a query answer carries besides the estimate: which version answered. */
export interface Answered<T> {
  model: { id: string; version: number; versionId: string };
  result: T;
}

export function createQueriesService(models: ModelsService, options: QueriesOptions = {}) {
  const repo = models.deps.models;
  const versions = new LRUCache<string, Promise<EffectCache>>({ max: options.maxVersions ?? 32 });
  const current = new LRUCache<string, VersionMeta>({ max: 10_000, ttl: options.currentTtlMs ?? 500 });

  const loadVersion = async (workspaceId: string, modelId: string, ref?: string): Promise<{ meta: VersionMeta; cache: EffectCache }> => {
    const key = `${workspaceId}/${modelId}`;
    let meta = ref === undefined || ref === 'current' ? current.get(key) : undefined;
    if (!meta) {
      meta = await models.version(workspaceId, modelId, ref);
      if (ref === undefined || ref === 'current') current.set(key, meta);
    }
    let hit = versions.get(meta.id);
    if (!hit) {
      const id = meta.id;
      hit = repo.artifact(workspaceId, id).then((bytes) => {
        if (!bytes) throw modelError('ERR_MODEL_VERSION_NOT_FOUND', { id: modelId, version: ref ?? 'current' });
        return new EffectCache(deserialise(bytes));
      });
      hit.catch(() => versions.delete(id));
      versions.set(id, hit);
    }
    return { meta, cache: await hit };
  };

  const answer = <T>(meta: VersionMeta, result: T): Answered<T> => ({
    model: { id: meta.modelId, version: meta.number, versionId: meta.id },
    result,
  });

  return {
    /** ATE, or CATE when `segment` is given. */
    async effect(workspaceId: string, modelId: string, q: EffectQuery, version?: string): Promise<Answered<EffectEstimate>> {
      const { meta, cache } = await loadVersion(workspaceId, modelId, version);
      checkQuery(cache.model, q.treatment, q.outcome, [q.arm, q.reference]);
      if (q.segment) checkSegments(cache.model, q.treatment, [q.segment]);
      return answer(meta, translate(() => estimateEffect(cache, q)));
    },

    /** Uplift of several arms by segment, recommended arm per segment, policy value. */
    async uplift(workspaceId: string, modelId: string, q: UpliftQuery, version?: string): Promise<Answered<UpliftTable>> {
      const { meta, cache } = await loadVersion(workspaceId, modelId, version);
      checkQuery(cache.model, q.treatment, q.outcome, [...q.arms, q.reference]);
      checkSegments(cache.model, q.treatment, translate(() => expandSegments(cache.model, cache.model.names.indexOf(q.treatment), q.by)), q.by);
      return answer(meta, translate(() => upliftTable(cache, q)));
    },

    /**
     * Per-unit predictions for posted rows under each arm. Seeded by the version and the
     * request, so the same question gets the same answer.
     */
    async whatIf(
      workspaceId: string,
      modelId: string,
      rows: ReadonlyArray<Readonly<Record<string, number | string | null>>>,
      q: WhatIfQuery,
      version?: string,
    ): Promise<Answered<WhatIfResult>> {
      const { meta, cache } = await loadVersion(workspaceId, modelId, version);
      checkQuery(cache.model, q.treatment, q.outcome, [...q.arms, ...(q.reference !== undefined ? [q.reference] : [])]);
      return answer(meta, translate(() => whatIf(cache.model, rows, q, Rng.create(meta.number))));
    },

    /** The loaded model of a version (the what-if route and the report read it). */
    async compiled(workspaceId: string, modelId: string, version?: string): Promise<{ meta: VersionMeta; model: CompiledModel; cache: EffectCache }> {
      const { meta, cache } = await loadVersion(workspaceId, modelId, version);
      return { meta, model: cache.model, cache };
    },

    /** Drop cached versions of a deleted model. */
    forget(versionIds: readonly string[]): void {
      for (const id of versionIds) versions.delete(id);
    },
  };
}

export type QueriesService = ReturnType<typeof createQueriesService>;

/** Names and arms checked up front, so the user hears which one to fix. */
function checkQuery(model: CompiledModel, treatment: string, outcome: string, arms: readonly Arm[]): void {
  for (const [where, v] of [
    ['treatment', treatment],
    ['outcome', outcome],
  ] as const) {
    if (!model.names.includes(v)) throw modelError('ERR_QUERY_UNKNOWN_VARIABLE', { where, variable: v, known: model.names.join(', ') });
  }
  if (treatment === outcome) throw modelError('ERR_QUERY_INVALID', { reason: 'treatment and outcome are the same variable; choose two different variables.' });
  const t = model.names.indexOf(treatment);
  const levels = model.levels[t];
  if (model.kinds[t] !== KIND_CONTINUOUS && levels) {
    for (const a of arms) {
      const v = typeof a === 'object' && a !== null && 'set' in a ? a.set : a;
      if (typeof v === 'string' && v !== 'observe' && !levels.includes(v)) {
        throw modelError('ERR_QUERY_UNKNOWN_ARM', { arm: v, treatment, levels: levels.join(', ') });
      }
    }
  }
}

/** Every segment reads only non-descendants and holds enough reference rows. */
function checkSegments(model: CompiledModel, treatment: string, segments: readonly Segment[], by?: SegmentBy): void {
  const t = model.names.indexOf(treatment);
  for (const s of segments) {
    for (const c of s.conditions) {
      if (!model.names.includes(c.variable)) {
        throw modelError('ERR_QUERY_UNKNOWN_VARIABLE', { where: 'segment', variable: c.variable, known: model.names.join(', ') });
      }
    }
    const r = translate(() => resolveSegment(model, t, s));
    // Empty cells of a cross product are dropped from uplift tables; explicit segments must not be empty.
    if (r.count === 0 && by && 'cells' in by) continue;
    if (r.count < MIN_SEGMENT_ROWS) throw modelError('ERR_QUERY_SEGMENT_TOO_SMALL', { segment: r.name, rows: r.count, min: MIN_SEGMENT_ROWS });
  }
}

/**
 * The engine's refusals of the question become catalogued 4xx errors. Anything else the engine
 * throws (a RangeError included) is a bug: it passes through and the api answers 500.
 */
function translate<T>(fn: () => T): T {
  try {
    return fn();
  } catch (e) {
    if (e instanceof SegmentError) throw modelError('ERR_QUERY_SEGMENT_DESCENDANT', { reason: e.message, variable: e.variable, graphs: e.graphs, weight: e.weight });
    if (e instanceof QueryRefusalError) throw modelError('ERR_QUERY_INVALID', { reason: e.message });
    throw e;
  }
}
