import type { PullResult } from '@crackpoint/sim-core';
import { z } from 'zod';

/** sim-core's PullResult as the API sends it; sim-core computes it, this only describes it. */
export const pullResultSchema = z.object({
  /** Sampled series, one entry per sample: timeS, rpm, boostPa, drivePa, liftM, shaftSpeedRadS, … (pressures gauge, Pa). */
  series: z.record(z.string(), z.array(z.number())),
  /** The results of MODEL.md §5 (Pa, s, kg); null where they do not apply. */
  metrics: z.record(z.string(), z.union([z.number(), z.boolean(), z.null()])),
  flags: z.record(z.string(), z.boolean()),
  stats: z.looseObject({
    outcome: z.enum(['converged', 'max-steps', 'too-many-events']),
    steps: z.number().int(),
    rejected: z.number().int(),
    evaluations: z.number().int(),
    reachedS: z.number(),
  }),
  /** What to know to read the pull: model limits and safety cautions. */
  notes: z.array(z.string()),
});

export const pullResponseSchema = z.object({
  pull: pullResultSchema,
  /** The scenario and version the pull was computed from. */
  scenarioId: z.uuid(),
  scenarioVersion: z.number().int(),
  /** The step limit the pull ran under here (the scenario's own, or the API's cap when lower). */
  maxSteps: z.number().int(),
});
export interface PullResponse {
  pull: PullResult;
  scenarioId: string;
  scenarioVersion: number;
  maxSteps: number;
}

/** Acting on a stored scenario needs no body; an empty object is accepted too. */
export const emptyBodySchema = z.strictObject({});

export const cloneScenarioBodySchema = z.strictObject({
  name: z.string({ error: 'must be text' }).trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters').optional(),
});
export type CloneScenarioBody = z.output<typeof cloneScenarioBodySchema>;
