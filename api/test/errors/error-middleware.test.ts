import { UniqueViolationError } from 'objection';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { AppError } from '../../src/errors/app-error.ts';
import { toErrorResponse, zodFields } from '../../src/errors/error-middleware.ts';

function zodErrorOf(schema: z.ZodType, value: unknown): z.ZodError {
  const parsed = schema.safeParse(value);
  if (parsed.success) throw new Error('expected the value to be refused');
  return parsed.error;
}

describe('toErrorResponse', () => {
  it('maps a zod error to 400 with fields keyed by dotted path', () => {
    const schema = z.object({ data: z.object({ wastegate: z.object({ valveDiameterM: z.number().positive('must be greater than 0') }) }) });
    const { status, body } = toErrorResponse(zodErrorOf(schema, { data: { wastegate: { valveDiameterM: -1 } } }));
    expect(status).toBe(400);
    expect(body.error.code).toBe('validation_failed');
    expect(body.error.fields).toEqual({ 'data.wastegate.valveDiameterM': 'must be greater than 0' });
  });

  it('names array positions in the path and the whole body when there is no path', () => {
    const axes = z.array(z.object({ values: z.array(z.number()).min(1, 'needs at least one value') }));
    expect(zodFields(zodErrorOf(axes, [{ values: [1] }, { values: [] }]))).toEqual({ '1.values': 'needs at least one value' });
    expect(Object.keys(zodFields(zodErrorOf(z.object({}), 'text')))).toEqual(['body']);
  });

  it('names each unknown field itself rather than the object around it', () => {
    const body = z.strictObject({ name: z.string(), data: z.strictObject({ ratio: z.number() }) });
    expect(zodFields(zodErrorOf(body, { name: 'x', colour: 'red', data: { ratio: 1, extra: 2 } }))).toEqual({
      colour: 'is not a known field',
      'data.extra': 'is not a known field',
    });
  });

  it('keeps an AppError as it is', () => {
    const { status, body } = toErrorResponse(AppError.conflict('version_conflict', 'Reload it.'));
    expect(status).toBe(409);
    expect(body).toEqual({ error: { code: 'version_conflict', message: 'Reload it.' } });
  });

  it('maps unique and foreign-key violations to 409 without the database text', () => {
    // Objection's typings show only a message argument; at run time the constructor takes db-errors' object.
    const UniqueViolation = UniqueViolationError as unknown as new (args: Record<string, unknown>) => Error;
    const fromObjection = new UniqueViolation({
      nativeError: new Error('duplicate key value violates unique constraint "users_email_unique"'),
      client: 'postgres',
      table: 'users',
      columns: ['email'],
      constraint: 'users_email_unique',
      schema: undefined,
    });
    const unique = toErrorResponse(fromObjection);
    expect(unique.status).toBe(409);
    expect(JSON.stringify(unique.body)).not.toMatch(/users_email|duplicate/);

    const raw = Object.assign(new Error('insert or update on table "sweeps" violates foreign key constraint'), { code: '23503' });
    const fk = toErrorResponse(raw);
    expect(fk.status).toBe(409);
    expect(fk.body.error.code).toBe('reference_conflict');
    expect(JSON.stringify(fk.body)).not.toMatch(/sweeps|foreign key/);
  });

  it('maps body-parser failures to 400 and 413', () => {
    expect(toErrorResponse(Object.assign(new SyntaxError('Unexpected token'), { type: 'entity.parse.failed', status: 400 }))).toMatchObject({
      status: 400,
      body: { error: { code: 'malformed_json' } },
    });
    expect(toErrorResponse(Object.assign(new Error('request entity too large'), { type: 'entity.too.large', status: 413 }))).toMatchObject({
      status: 413,
      body: { error: { code: 'payload_too_large' } },
    });
  });

  it('turns anything else into a generic 500 that says nothing of the cause', () => {
    const result = toErrorResponse(new Error('connect ECONNREFUSED 127.0.0.1:5432 password authentication failed'));
    expect(result.status).toBe(500);
    expect(result.unexpected).toBe(true);
    expect(result.body.error.code).toBe('internal');
    expect(result.body.error.message).not.toMatch(/ECONNREFUSED|password|5432/);
  });
});
