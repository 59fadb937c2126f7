import { z } from 'zod';

export const uuidSchema = z.uuid({ error: 'must be an id' });

/**
 * A path that names one record by its id. The router answers a path id that is not even an id with
 * that record's 404: it cannot name a record, so it is "not found", never a 400 or a database cast error.
 */
export const idParamsSchema = z.strictObject({ id: uuidSchema });
