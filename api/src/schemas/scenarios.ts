import { z } from 'zod';

const nameSchema = z
  .string({ error: 'is required' })
  .trim()
  .min(1, 'must not be empty')
  .max(200, 'must be at most 200 characters');

/**
 * `data` stays `unknown` here: sim-core's parseScenario owns what a scenario is and names every
 * field under `data.` itself.
 */
export const createScenarioBodySchema = z.strictObject({
  name: nameSchema,
  data: z.unknown().optional(),
});
export type CreateScenarioBody = z.output<typeof createScenarioBodySchema>;

export const updateScenarioBodySchema = z.strictObject({
  name: nameSchema.optional(),
  data: z.unknown().optional(),
  version: z.number({ error: 'is required' }).int('must be a whole number').min(1, 'must be at least 1'),
});
export type UpdateScenarioBody = z.output<typeof updateScenarioBodySchema>;

export const scenarioRowSchema = z.object({
  id: z.uuid(),
  name: z.string(),
  data: z.unknown(),
  version: z.number().int(),
  ownerId: z.uuid().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type ScenarioRow = z.infer<typeof scenarioRowSchema>;


export const scenarioResponseSchema = z.object({ scenario: scenarioRowSchema });
export const scenarioListSchema = z.object({ items: z.array(scenarioRowSchema), total: z.number().int() });
