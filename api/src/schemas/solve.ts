import { SOLVE_TARGETS, SOLVE_UNKNOWNS, TARGET_BOOST_MAX_PA } from '@crackpoint/sim-core';
import { z } from 'zod';

const ratio = z.number({ error: 'must be a number' }).gt(0, 'must be above 0').max(5, 'must be at most 5');

/** What to solve a stored scenario for: one unknown, which boost, the target, and the ratio band. */
export const solveBodySchema = z
  .strictObject({
    unknown: z.enum(SOLVE_UNKNOWNS, { error: `must be one of ${SOLVE_UNKNOWNS.join(', ')}` }),
    /** crack or full-open (static, instant); a settled-boost target runs pulls and is answered on the page or by the CLI. */
    target: z.enum(SOLVE_TARGETS, { error: `must be one of ${SOLVE_TARGETS.join(', ')}` }),
    /** Gauge, Pa. */
    targetBoostPa: z
      .number({ error: 'must be a number' })
      .gt(0, 'must be above 0')
      .max(TARGET_BOOST_MAX_PA, `must be at most ${TARGET_BOOST_MAX_PA} Pa (145 psi)`),
    /** [low, high]; the scenario's own ratio when left out. */
    ratioBand: z.tuple([ratio, ratio], { error: 'must be two ratios, low then high' }).optional(),
  })
  .superRefine((b, ctx) => {
    if (b.ratioBand && b.ratioBand[1] < b.ratioBand[0]) {
      ctx.addIssue({ code: 'custom', path: ['ratioBand', 1], message: 'must be at least the low end of the band' });
    }
  });
export type SolveBody = z.output<typeof solveBodySchema>;

const bandBoostSchema = z.object({ ratio: z.number(), boostPa: z.number().nullable(), settles: z.boolean().nullable() });

/** sim-core's SolveResult without the scenario it puts the answer into (the client has that scenario already). */
export const solveResultSchema = z.discriminatedUnion('status', [
  z.object({
    status: z.literal('solved'),
    unknown: z.enum(SOLVE_UNKNOWNS),
    target: z.enum(SOLVE_TARGETS),
    targetBoostPa: z.number(),
    /** SI: N, Pa gauge, or a fraction 0–1. */
    value: z.number(),
    benchCrackPressurePa: z.number().nullable(),
    band: z.array(bandBoostSchema),
    worstMissPa: z.number(),
    pulls: z.number().int(),
  }),
  z.object({
    status: z.literal('unreachable'),
    unknown: z.enum(SOLVE_UNKNOWNS),
    target: z.enum(SOLVE_TARGETS),
    targetBoostPa: z.number(),
    reason: z.enum(['below-range', 'above-range', 'no-settled-boost']),
    message: z.string(),
    nearest: z.object({ value: z.number(), band: z.array(bandBoostSchema) }),
    pulls: z.number().int(),
  }),
]);

export const solveResponseSchema = z.object({
  solve: solveResultSchema,
  scenarioId: z.uuid(),
  scenarioVersion: z.number().int(),
});
