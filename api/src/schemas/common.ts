import { z } from 'zod';
import { AppError } from '../errors/index.ts';

export const uuidSchema = z.uuid({ error: 'must be an id' });

/** Parses a value at the edge; a failure reaches the error middleware as a 400 naming each field. */
export function parseInput<T extends z.ZodType>(schema: T, value: unknown): z.output<T> {
  return schema.parse(value);
}

/**
 * A path id that is not even a uuid cannot name a record, so it is "not found", never a 400 and
 * never a PostgreSQL cast error.
 */
export function parseId(value: unknown, what: string): string {
  const parsed = uuidSchema.safeParse(value);
  if (!parsed.success) throw AppError.notFound(what);
  return parsed.data;
}

/** A path that names one record by its id; the router turns a failure into that record's 404. */
export const idParamsSchema = z.strictObject({ id: uuidSchema });

export const paginationQuerySchema = z.object({
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});
