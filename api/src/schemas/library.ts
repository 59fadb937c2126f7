import { engineSchema, springSchema, supplySchema, turboSchema, wastegateSchema } from '@crackpoint/sim-core';
import type { ModelClass } from 'objection';
import { z } from 'zod';
import { Engine, Spring, Supply, Turbo, Wastegate, type LibraryItem } from '../models/index.ts';

export const LIBRARY_KIND_KEYS = ['wastegates', 'springs', 'turbos', 'engines', 'supplies'] as const;
export type LibraryKindKey = (typeof LIBRARY_KIND_KEYS)[number];

export interface LibraryKind {
  key: LibraryKindKey;
  /** "spring": in messages, audit entries and route ids. */
  singular: string;
  /** "Spring": in titles and 404s. */
  title: string;
  model: ModelClass<LibraryItem>;
  /** sim-core's schema of the scenario section the part fills: sim-core owns what the fields mean. */
  dataSchema: z.ZodType;
  /** The scenario column that records the part a scenario was built from (springs have a table of their own). */
  scenarioColumn: 'wastegate_id' | 'turbo_id' | 'engine_id' | 'supply_id' | null;
  /** The field of `data` that `?kind=` filters on, with its values. */
  kindFilter?: { field: string; values: readonly [string, ...string[]] };
  /** Numeric fields of `data` a list may be sorted by. */
  sortFields: readonly string[];
}

export const LIBRARY_KINDS: Record<LibraryKindKey, LibraryKind> = {
  wastegates: {
    key: 'wastegates',
    singular: 'wastegate',
    title: 'Wastegate',
    model: Wastegate,
    dataSchema: wastegateSchema,
    scenarioColumn: 'wastegate_id',
    kindFilter: { field: 'actuatorKind', values: ['diaphragm', 'piston'] },
    sortFields: ['valveDiameterM', 'actuatorDiameterM', 'maxLiftM'],
  },
  springs: {
    key: 'springs',
    singular: 'spring',
    title: 'Spring',
    model: Spring,
    dataSchema: springSchema,
    scenarioColumn: null,
    kindFilter: { field: 'from', values: ['seat', 'bench'] },
    sortFields: ['seatForceN', 'benchCrackPressurePa', 'rateNPerM'],
  },
  turbos: {
    key: 'turbos',
    singular: 'turbo',
    title: 'Turbo',
    model: Turbo,
    dataSchema: turboSchema,
    scenarioColumn: 'turbo_id',
    sortFields: ['compressorTipRadiusM', 'inducerDiameterM', 'compressorEfficiency', 'turbineEfficiency'],
  },
  engines: {
    key: 'engines',
    singular: 'engine',
    title: 'Engine',
    model: Engine,
    dataSchema: engineSchema,
    scenarioColumn: 'engine_id',
    sortFields: ['displacementM3', 'rpmStart', 'rpmEnd'],
  },
  supplies: {
    key: 'supplies',
    singular: 'supply',
    title: 'Supply',
    model: Supply,
    dataSchema: supplySchema,
    scenarioColumn: 'supply_id',
    kindFilter: { field: 'kind', values: ['boost', 'co2', 'compressor'] },
    sortFields: ['regulatorSetpointPa'],
  },
};

export const libraryNameSchema = z
  .string({ error: 'is required' })
  .trim()
  .min(1, 'must not be empty')
  .max(120, 'must be at most 120 characters');

const notesSchema = z.string({ error: 'must be text' }).max(4000, 'must be at most 4000 characters');

export const versionSchema = z
  .number({ error: (issue) => (issue.input === undefined ? 'is required' : 'must be a number') })
  .int('must be a whole number')
  .min(1, 'must be at least 1');

export const sortOrderSchema = z.enum(['asc', 'desc'], { error: 'must be asc or desc' }).default('asc');

export function libraryCreateBodySchema(kind: LibraryKind) {
  return z.strictObject({ name: libraryNameSchema, notes: notesSchema.default(''), data: kind.dataSchema });
}
export type LibraryCreateBody = { name: string; notes: string; data: unknown };

export function libraryUpdateBodySchema(kind: LibraryKind) {
  return z.strictObject({
    name: libraryNameSchema.optional(),
    notes: notesSchema.optional(),
    /** The whole part: it replaces the stored one, nothing is merged. */
    data: kind.dataSchema.optional(),
    /** Archive (true) or bring back (false). */
    archived: z.boolean({ error: 'must be true or false' }).optional(),
    version: versionSchema,
  });
}
export type LibraryUpdateBody = { name?: string; notes?: string; data?: unknown; archived?: boolean; version: number };

const BASE_SORTS = ['name', 'createdAt', 'updatedAt'] as const;

export function libraryListQuerySchema(kind: LibraryKind) {
  const sorts = [...BASE_SORTS, ...kind.sortFields] as [string, ...string[]];
  return z.object({
    /** Part of the name, any letter case. */
    q: z.string().trim().max(120, 'must be at most 120 characters').optional(),
    archived: z.enum(['false', 'true', 'all'], { error: 'must be false, true or all' }).default('false'),
    ...(kind.kindFilter ? { kind: z.enum(kind.kindFilter.values, { error: `must be one of ${kind.kindFilter.values.join(', ')}` }).optional() } : {}),
    sort: z.enum(sorts, { error: `must be one of ${sorts.join(', ')}` }).default('name'),
    order: sortOrderSchema,
    limit: z.coerce.number().int('must be a whole number').min(1, 'must be at least 1').max(200, 'must be at most 200').default(50),
    offset: z.coerce.number().int('must be a whole number').min(0, 'must be at least 0').default(0),
  });
}
export interface LibraryListQuery {
  q?: string;
  archived: 'false' | 'true' | 'all';
  kind?: string;
  sort: string;
  order: 'asc' | 'desc';
  limit: number;
  offset: number;
}

export function libraryRowSchema(kind: LibraryKind) {
  return z.object({
    id: z.uuid(),
    name: z.string(),
    notes: z.string(),
    data: kind.dataSchema,
    version: z.number().int(),
    archived: z.boolean(),
    archivedAt: z.string().nullable(),
    createdBy: z.uuid().nullable(),
    updatedBy: z.uuid().nullable(),
    createdAt: z.string(),
    updatedAt: z.string(),
  });
}
export interface LibraryRow {
  id: string;
  name: string;
  notes: string;
  data: unknown;
  version: number;
  archived: boolean;
  archivedAt: string | null;
  createdBy: string | null;
  updatedBy: string | null;
  createdAt: string;
  updatedAt: string;
}
