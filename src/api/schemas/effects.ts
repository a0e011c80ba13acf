/** Request schemas of the effect routes (ATE/CATE, uplift, what-if); answers are described loosely. */
import { z } from 'zod';

const Variable = z.string().min(1).max(200);
const Value = z.union([z.number(), z.string().max(200)]);

export const Condition = z.union([
  z.object({ variable: Variable, in: z.array(Value).min(1).max(1000) }).strict().describe('The variable’s level is one of `in`.'),
  z
    .object({ variable: Variable, range: z.tuple([z.number().nullable(), z.number().nullable()]) })
    .strict()
    .describe('min ≤ value < max; null leaves a side open.'),
]);

export const Segment = z.object({ name: z.string().max(200).optional(), conditions: z.array(Condition).max(20) }).strict();

export const Arm = z
  .union([
    Value,
    z.object({ set: Value }).strict(),
    z.object({ shift: z.number() }).strict(),
    z.object({ percent: z.number() }).strict(),
    z
      .object({
        policy: z.array(z.object({ if: z.union([Condition, z.array(Condition).max(20)]), then: Value }).strict()).min(1).max(100),
        otherwise: Value,
      })
      .strict(),
  ])
  .describe('A value or level: do(T = value). {shift} or {percent}: move T from its own value. {policy}: set T per unit by rules on pre-treatment variables. "observe": no intervention.');

const Common = {
  treatment: Variable,
  outcome: Variable,
  outcomeLevel: Value.optional().describe('For a categorical outcome: the level whose probability is the outcome.'),
  level: z.number().gt(0).lt(1).optional().describe('Interval level (default 0.9).'),
  crossCheck: z.boolean().optional().describe('Compute the AIPW cross-check per graph (default true).'),
  version: z
    .union([z.number().int().positive(), z.string().min(1).max(100)])
    .optional()
    .describe('Version to answer from: its number (3 or "3", as answers report it in model.version), its id, or "current" (the default).'),
};

export const EffectBody = z
  .object({
    ...Common,
    arm: Arm,
    reference: Arm,
    segment: Segment.optional().describe('Restrict to a segment of pre-treatment variables (CATE).'),
  })
  .strict();

export const SegmentBy = z.union([
  z.object({ cells: z.array(Variable).min(1).max(4) }).strict().describe('Every cell of these discrete variables.'),
  z.object({ variable: Variable, bins: z.number().int().min(2).max(20) }).strict().describe('Quantile bins of a numeric variable.'),
  z.object({ segments: z.array(Segment).min(1).max(200) }).strict(),
]);

export const UpliftBody = z
  .object({
    ...Common,
    arms: z.array(Arm).min(1).max(10),
    reference: Arm,
    by: SegmentBy,
    better: z.enum(['higher', 'lower']).describe('Which direction of the outcome is better.'),
    costs: z.array(z.number()).max(10).optional().describe('Cost per unit of each arm, in outcome units.'),
    referenceCost: z.number().optional(),
  })
  .strict();

export const WhatIfBody = z
  .object({
    ...Common,
    arms: z.array(Arm).min(1).max(10),
    reference: Arm.optional().describe('Arm the effects are taken against (default the first arm).'),
    draws: z.number().int().min(10).max(10_000).optional().describe('Draws per row for values the row does not give (default 200).'),
    rows: z.array(z.record(Variable, z.union([z.number(), z.string().max(200), z.null()]))).min(1).max(1000),
  })
  .strict();

export const ModelIdParams = z.object({ id: z.string().min(1).max(100) });

/** Every answer: which version answered, the result, and the standing cautions. */
export const Answer = z.object({
  model: z.object({ id: z.string(), version: z.number(), versionId: z.string() }),
  result: z.unknown(),
});

/** The `version` of a question as the models service takes it (numbers become their decimal text). */
export const versionRef = (version: number | string | undefined): string | undefined => (version === undefined ? undefined : String(version));
