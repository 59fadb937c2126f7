import { z } from 'zod';
import { DATALOG_UNITS } from '../services/datalogs/datalog-columns.ts';
import { scenarioRowSchema } from './scenarios.ts';
import { uuidSchema } from './common.ts';

const columnSchema = z.string({ error: 'must be the name of a column' }).trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters');

function choice<const U extends readonly [string, ...string[]]>(unitsOf: U) {
  return z.strictObject({
    column: columnSchema,
    unit: z.enum(unitsOf, { error: `must be one of ${unitsOf.join(', ')}` }),
  });
}

/** Which column holds each quantity and in what unit; time and boost are needed, the rest may be null. */
export const datalogMappingSchema = z.strictObject({
  time: choice(DATALOG_UNITS.time),
  boost: choice(DATALOG_UNITS.boost),
  rpm: choice(DATALOG_UNITS.rpm).nullable().default(null),
  drive: choice(DATALOG_UNITS.drive).nullable().default(null),
  duty: choice(DATALOG_UNITS.duty).nullable().default(null),
  supply: choice(DATALOG_UNITS.supply).nullable().default(null),
});
export type DatalogMappingBody = z.output<typeof datalogMappingSchema>;

export const datalogScenarioBodySchema = z.strictObject({ scenarioId: uuidSchema });
export type DatalogScenarioBody = z.output<typeof datalogScenarioBodySchema>;

export const datalogFitBodySchema = z.strictObject({
  scenarioId: uuidSchema,
  /** The fitted copy's name; "<scenario> — fitted to <file>" when left out. */
  name: z.string({ error: 'must be text' }).trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters').optional(),
});
export type DatalogFitBody = z.output<typeof datalogFitBodySchema>;

export const listDatalogsQuerySchema = z.object({
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});
export type ListDatalogsQuery = z.output<typeof listDatalogsQuerySchema>;

const nullableChoice = z.object({ column: z.string(), unit: z.string() }).nullable();
const mappingShape = z.object({
  time: z.object({ column: z.string(), unit: z.string() }),
  boost: z.object({ column: z.string(), unit: z.string() }),
  rpm: nullableChoice,
  drive: nullableChoice,
  duty: nullableChoice,
  supply: nullableChoice,
});

export const datalogRowSchema = z.object({
  id: z.uuid(),
  filename: z.string(),
  byteSize: z.number().int(),
  sha256: z.string(),
  rowCount: z.number().int(),
  uploadedBy: z.uuid().nullable(),
  /** The file's header, in order. */
  columns: z.array(z.string()),
  /** The mapping in use: as detected until a member confirms or changes it. */
  mapping: mappingShape,
  mappingConfirmed: z.boolean(),
  /** How each quantity was found, or why it was not. */
  detectionNotes: z.record(z.string(), z.string()),
  /** Seconds from the first row to the last, and the highest boost (Pa, gauge). */
  durationS: z.number(),
  peakBoostPa: z.number(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type DatalogRow = z.infer<typeof datalogRowSchema>;

/** A datalog's series in SI: time from the first row (s), pressures gauge (Pa), duty 0–1; null where not logged. */
export const datalogSeriesSchema = z.object({
  timeS: z.array(z.number()),
  boostPa: z.array(z.number()),
  rpm: z.array(z.number()).nullable(),
  drivePa: z.array(z.number()).nullable(),
  duty: z.array(z.number()).nullable(),
  supplyPa: z.array(z.number()).nullable(),
});

export const datalogResponseSchema = z.object({ datalog: datalogRowSchema });
export const datalogDetailSchema = z.object({ datalog: datalogRowSchema, series: datalogSeriesSchema });
export const datalogListSchema = z.object({ items: z.array(datalogRowSchema), total: z.number().int() });

export const datalogOverlaySchema = z.object({
  overlay: z.object({
    scenarioId: z.uuid(),
    scenarioVersion: z.number().int(),
    measured: datalogSeriesSchema,
    /** The simulated pull's time, boost and drive pressure (s, Pa gauge). */
    simulated: z.object({ timeS: z.array(z.number()), boostPa: z.array(z.number()), drivePa: z.array(z.number()) }),
    /** Measured − simulated boost at the measured times inside the pull. */
    rmsBoostDifferencePa: z.number(),
    pointsCompared: z.number().int(),
    notes: z.array(z.string()),
  }),
});

export const datalogFitReportSchema = z.looseObject({
  ratio: z.number(),
  seatForceN: z.number(),
  initial: z.object({ ratio: z.number(), seatForceN: z.number() }),
  rmsResidualPa: z.number(),
  /** Measured − simulated drive pressure (RMS) when the log has it and it was fitted alongside boost. */
  driveRmsResidualPa: z.number().nullable(),
  initialRmsResidualPa: z.number(),
  relativeResidual: z.number(),
  poorFit: z.boolean(),
  iterations: z.number().int(),
  evaluations: z.number().int(),
  converged: z.boolean(),
  stop: z.string(),
  pointsCompared: z.number().int(),
  fitted: z.object({ timeS: z.array(z.number()), boostPa: z.array(z.number()) }),
  notes: z.array(z.string()),
});

export const datalogFitResponseSchema = z.object({
  fit: datalogFitReportSchema,
  /** The new scenario: a copy of the one fitted, with the fitted ratio and seat force; null when the fit is poor. */
  scenario: scenarioRowSchema.nullable(),
});
