import { scenarioSchema } from '@crackpoint/sim-core';
import { z } from 'zod';
import { uuidSchema } from './common.ts';
import { sortOrderSchema, versionSchema } from './library.ts';

const nameSchema = z
  .string({ error: 'is required' })
  .trim()
  .min(1, 'must not be empty')
  .max(200, 'must be at most 200 characters');

/**
 * The library parts to build the scenario from. Each part named replaces its section of the data
 * (springs in the order given, nested springs adding up) and is remembered as the section's source; null
 * (or an empty springIds) forgets the source and keeps the data as it is.
 */
export const scenarioSourcesInputSchema = z.strictObject({
  engineId: uuidSchema.nullable().optional(),
  turboId: uuidSchema.nullable().optional(),
  wastegateId: uuidSchema.nullable().optional(),
  springIds: z.array(uuidSchema).max(3, 'takes at most 3 nested springs').optional(),
  supplyId: uuidSchema.nullable().optional(),
});
export type ScenarioSourcesInput = z.output<typeof scenarioSourcesInputSchema>;

/**
 * `data` is sim-core's own scenario schema, which owns what a scenario is; a full scenario or none (the
 * default), never merged with defaults.
 */
export const createScenarioBodySchema = z.strictObject({
  name: nameSchema,
  data: scenarioSchema.optional(),
  sources: scenarioSourcesInputSchema.optional(),
});
export type CreateScenarioBody = z.output<typeof createScenarioBodySchema>;

export const updateScenarioBodySchema = z.strictObject({
  name: nameSchema.optional(),
  data: scenarioSchema.optional(),
  sources: scenarioSourcesInputSchema.optional(),
  version: versionSchema,
});
export type UpdateScenarioBody = z.output<typeof updateScenarioBodySchema>;

export const SCENARIO_SORTS = ['name', 'createdAt', 'updatedAt'] as const;

export const listScenariosQuerySchema = z.object({
  /** Part of the name, any letter case. */
  q: z.string().trim().max(200, 'must be at most 200 characters').optional(),
  ownerId: uuidSchema.optional(),
  sort: z.enum(SCENARIO_SORTS, { error: 'must be one of name, createdAt, updatedAt' }).default('updatedAt'),
  order: sortOrderSchema.unwrap().default('desc'),
  limit: z.coerce.number().int('must be a whole number').min(1, 'must be at least 1').max(200, 'must be at most 200').default(50),
  offset: z.coerce.number().int('must be a whole number').min(0, 'must be at least 0').default(0),
});
export type ListScenariosQuery = z.output<typeof listScenariosQuerySchema>;

export const scenarioSourcesSchema = z.object({
  engineId: z.uuid().nullable(),
  turboId: z.uuid().nullable(),
  wastegateId: z.uuid().nullable(),
  springIds: z.array(z.uuid()),
  supplyId: z.uuid().nullable(),
});
export type ScenarioSources = z.infer<typeof scenarioSourcesSchema>;

export const scenarioRowSchema = z.object({
  id: z.uuid(),
  name: z.string(),
  data: scenarioSchema,
  version: z.number().int(),
  ownerId: z.uuid().nullable(),
  sources: scenarioSourcesSchema,
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type ScenarioRow = z.infer<typeof scenarioRowSchema>;

export const scenarioResponseSchema = z.object({ scenario: scenarioRowSchema });
export const scenarioListSchema = z.object({ items: z.array(scenarioRowSchema), total: z.number().int() });
