import type { ErrorRequestHandler } from 'express';
import {
  CheckViolationError,
  DataError,
  ForeignKeyViolationError,
  NotFoundError,
  NotNullViolationError,
  UniqueViolationError,
} from 'objection';
import { ZodError } from 'zod';
import { AppError, type FieldErrors } from './app-error.ts';

export interface ErrorBody {
  error: { code: string; message: string; fields?: FieldErrors };
}

/** The dotted path a client uses to find the field; the whole body when the issue has no path. */
export function zodFields(error: ZodError, prefix = ''): FieldErrors {
  // No prototype: a field named "__proto__" or "constructor" is named like any other, not swallowed by Object's own.
  const fields: FieldErrors = Object.create(null) as FieldErrors;
  for (const issue of error.issues) {
    const base = [prefix, ...issue.path.map(String)].filter((part) => part !== '');
    // A field the request does not know is named itself, not the object around it.
    if (issue.code === 'unrecognized_keys') {
      for (const key of issue.keys) fields[[...base, key].join('.')] ??= 'is not a known field';
      continue;
    }
    fields[base.join('.') || 'body'] ??= issue.message;
  }
  return fields;
}

interface PgErrorLike {
  code?: unknown;
}

// SQLSTATE classes from the PostgreSQL manual, appendix A, for errors raised outside Objection
// (raw knex queries), which Objection does not wrap.
const PG_UNIQUE = '23505';
const PG_FOREIGN_KEY = '23503';
const PG_BAD_INPUT = new Set(['23502', '23514', '22P02', '22003', '22001']);

interface BodyParserErrorLike {
  type?: unknown;
  status?: unknown;
  expose?: unknown;
}

/** Maps every error to the contract's body; PostgreSQL's own text never reaches the client. */
export function toErrorResponse(error: unknown): { status: number; body: ErrorBody; unexpected: boolean } {
  const reply = (status: number, code: string, message: string, fields?: FieldErrors) => ({
    status,
    body: { error: fields ? { code, message, fields } : { code, message } },
    unexpected: false,
  });

  if (error instanceof AppError) return reply(error.status, error.code, error.message, error.fields);
  if (error instanceof ZodError) return reply(400, 'validation_failed', 'Some fields are not valid.', zodFields(error));
  if (error instanceof NotFoundError) return reply(404, 'not_found', 'That was not found.');
  if (error instanceof UniqueViolationError) {
    return reply(409, 'already_exists', 'Something with the same unique value already exists.');
  }
  if (error instanceof ForeignKeyViolationError) {
    return reply(409, 'reference_conflict', 'That refers to something that does not exist or is still in use.');
  }
  if (error instanceof CheckViolationError || error instanceof NotNullViolationError || error instanceof DataError) {
    return reply(400, 'invalid_value', 'A value is out of the allowed range.');
  }

  const pg = error as PgErrorLike;
  if (typeof pg?.code === 'string') {
    if (pg.code === PG_UNIQUE) return reply(409, 'already_exists', 'Something with the same unique value already exists.');
    if (pg.code === PG_FOREIGN_KEY) {
      return reply(409, 'reference_conflict', 'That refers to something that does not exist or is still in use.');
    }
    if (PG_BAD_INPUT.has(pg.code)) return reply(400, 'invalid_value', 'A value is out of the allowed range.');
  }

  // body-parser marks its errors with a type and an HTTP status.
  const parser = error as BodyParserErrorLike;
  if (parser?.type === 'entity.parse.failed') return reply(400, 'malformed_json', 'The request body is not valid JSON.');
  if (parser?.type === 'entity.too.large') return reply(413, 'payload_too_large', 'The request body is too large.');
  if (typeof parser?.status === 'number' && parser.status >= 400 && parser.status < 500 && parser.expose === true) {
    return reply(parser.status, 'bad_request', 'The request could not be read.');
  }

  return {
    status: 500,
    body: { error: { code: 'internal', message: 'Something went wrong on our side. Please try again.' } },
    unexpected: true,
  };
}

export const errorMiddleware: ErrorRequestHandler = (error, req, res, next) => {
  if (res.headersSent) {
    next(error);
    return;
  }
  const { status, body, unexpected } = toErrorResponse(error);
  if (unexpected) req.log?.error({ err: error }, 'unexpected error');
  else if (status >= 500) req.log?.warn({ code: body.error.code }, 'request failed');
  res.status(status).json(body);
};
