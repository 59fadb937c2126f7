import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import express, { Router, type Request, type RequestHandler, type Response } from 'express';
import multer from 'multer';
import { ZodError, type z } from 'zod';
import { AppError } from '../errors/index.ts';
import { authenticateRequest } from '../middleware/authenticate.ts';
import { createLimiters } from '../middleware/rate-limits.ts';
import { Reply, StreamReply, type AnyRoute, type ApiDeps, type UploadedFile } from './route-def.ts';

const JSON_TYPES = ['application/json', 'application/*+json'];

/** A scenario is a few kilobytes and a sweep at most 3 × 1000 values; anything far larger is a mistake. */
const JSON_LIMIT = '1mb';
const jsonParser = express.json({ limit: JSON_LIMIT });

/** Text fields of an upload form are short labels and ids; a file goes in the file part. */
const FORM_FIELD_LIMITS = { fields: 20, fieldSize: 64 * 1024, parts: 22 } as const;

/** A body that is there but is not JSON; an empty POST is left for the route's schema to judge. */
function hasNonJsonBody(req: Request): boolean {
  if (req.get('content-length') === '0') return false;
  return req.is(JSON_TYPES) === false;
}

const NULL_CHARACTER = '\u0000';

/**
 * Text PostgreSQL cannot store (a null character) and keys that name Object's own machinery, anywhere in a query
 * or a body, each named by its path: a 400 before any schema or query sees them, never a 500 from the database.
 */
function unsafeInputFields(value: unknown, path: string, fields: Record<string, string>, depth = 0): void {
  if (depth > 64) return;
  if (typeof value === 'string') {
    if (value.includes(NULL_CHARACTER)) fields[path || 'body'] = 'must not contain a null character';
    return;
  }
  if (value === null || typeof value !== 'object' || Buffer.isBuffer(value)) return;
  for (const key of Object.keys(value)) {
    const at = path ? `${path}.${key}` : key;
    if (key.includes(NULL_CHARACTER)) {
      fields[at.replaceAll(NULL_CHARACTER, '\\0')] = 'is not a field name: it holds a null character';
      continue;
    }
    if (key === '__proto__' || key === 'constructor' || key === 'prototype') {
      fields[at] = 'is not a field name';
      continue;
    }
    unsafeInputFields((value as Record<string, unknown>)[key], at, fields, depth + 1);
  }
}

function refuseUnsafeInput(query: unknown, body: unknown): void {
  const fields: Record<string, string> = Object.create(null) as Record<string, string>;
  unsafeInputFields(query, '', fields);
  unsafeInputFields(body, '', fields);
  if (Object.keys(fields).length > 0) throw AppError.validation(fields);
}

function parsePart<S extends z.ZodType | undefined>(schema: S, value: unknown): unknown {
  return schema ? schema.parse(value) : undefined;
}

/** Multer's own errors, turned into answers that name the form field and the limit. */
function multipartParser(field: string, maxBytes: number): RequestHandler {
  const upload = multer({
    storage: multer.memoryStorage(),
    limits: { ...FORM_FIELD_LIMITS, files: 1, fileSize: maxBytes },
  }).single(field);
  return (req, res, next) => {
    upload(req, res, (error: unknown) => {
      if (error === undefined || error === null) {
        next();
        return;
      }
      if (error instanceof multer.MulterError) {
        if (error.code === 'LIMIT_FILE_SIZE') {
          next(
            new AppError(413, 'file_too_large', `The file is larger than the ${formatBytes(maxBytes)} this accepts.`, {
              [field]: `must be at most ${formatBytes(maxBytes)}`,
            }),
          );
          return;
        }
        const name = error.field ?? field;
        const message =
          error.code === 'LIMIT_UNEXPECTED_FILE' ? `is not expected here; send the file as the form field "${field}"` : 'is too large or too many';
        next(new AppError(400, 'invalid_form', `The form could not be read: ${name} ${message}.`, { [name]: message }));
        return;
      }
      // A cut-off or malformed multipart body (busboy's own errors) is the client's, not ours.
      next(new AppError(400, 'invalid_form', 'The form could not be read: the multipart body is malformed or cut off.'));
    });
  };
}

function formatBytes(bytes: number): string {
  if (bytes >= 1024 * 1024) return `${(bytes / (1024 * 1024)).toFixed(bytes % (1024 * 1024) === 0 ? 0 : 1)} MB`;
  if (bytes >= 1024) return `${Math.round(bytes / 1024)} kB`;
  return `${bytes} bytes`;
}

function uploadedFile(req: Request): UploadedFile | undefined {
  const file = req.file;
  if (!file) return undefined;
  return { fieldName: file.fieldname, originalName: file.originalname, mimeType: file.mimetype, size: file.size, buffer: file.buffer };
}

/** Aborted when the client goes away before the answer is complete. */
function clientSignal(req: Request, res: Response): AbortSignal {
  const controller = new AbortController();
  res.on('close', () => {
    if (!res.writableFinished) controller.abort();
  });
  req.on('aborted', () => controller.abort());
  return controller.signal;
}

async function sendStream(res: Response, reply: StreamReply): Promise<void> {
  res.status(reply.status);
  // attachment() guesses a media type from the name; the reply's own type is set after it and wins.
  if (reply.filename !== undefined) res.attachment(reply.filename);
  res.setHeader('Content-Type', reply.contentType);
  if (reply.contentType.startsWith('text/event-stream')) {
    // Events must reach the browser as they happen, not when a proxy's buffer fills.
    res.setHeader('Cache-Control', 'no-cache');
    res.setHeader('X-Accel-Buffering', 'no');
  }
  for (const [name, value] of Object.entries(reply.headers)) res.setHeader(name, value);
  res.flushHeaders();
  try {
    await pipeline(Readable.from(reply.source, { objectMode: false }), res);
  } catch (error) {
    // The client leaving mid-stream is how most streams end; only a fault of ours is worth logging.
    if (res.destroyed && !res.writableFinished && (error as { code?: unknown }).code === 'ERR_STREAM_PREMATURE_CLOSE') return;
    res.log?.error({ err: error }, 'stream failed after the answer started');
    res.destroy();
  }
}

function routeHandler(route: AnyRoute, deps: ApiDeps): RequestHandler {
  const bodyKind = route.requestBody?.kind ?? 'json';
  return async (req, res) => {
    let params: unknown;
    try {
      params = parsePart(route.params, req.params);
    } catch (error) {
      // A path id that is not even an id cannot name a record: "not found", never a 400 or a cast error.
      if (error instanceof ZodError) throw AppError.notFound(route.resource ?? 'That');
      throw error;
    }
    const sent: unknown = bodyKind === 'raw' ? undefined : req.body;
    refuseUnsafeInput(req.query, sent);
    const query = parsePart(route.query, req.query);
    const body = route.body && !(route.bodyOptional && sent === undefined) ? route.body.parse(sent) : undefined;
    const rawBody = bodyKind === 'raw' && Buffer.isBuffer(req.body) ? req.body : undefined;

    const result: unknown = await route.handler({
      deps,
      auth: req.auth,
      params,
      query,
      body,
      headers: req.headers,
      signal: clientSignal(req, res),
      ip: req.ip ?? '',
      ...(bodyKind === 'multipart' ? { file: uploadedFile(req) } : {}),
      ...(rawBody ? { rawBody } : {}),
    });
    if (result instanceof StreamReply) {
      await sendStream(res, result);
      return;
    }
    const status = result instanceof Reply ? result.status : route.success.status;
    const payload = result instanceof Reply ? result.body : result;
    if (status === 204 || payload === undefined) {
      res.status(status).end();
      return;
    }
    res.status(status).json(payload);
  };
}

/** The Express router for every route of the table, in the table's order. */
export function buildRouter(routes: readonly AnyRoute[], deps: ApiDeps): Router {
  const router = Router();
  const limiters = createLimiters(deps.config);

  for (const route of routes) {
    const chain: RequestHandler[] = [];
    const bodyKind = route.requestBody ?? { kind: 'json' as const };
    if (route.method !== 'get' && bodyKind.kind === 'json') {
      chain.push(jsonParser, (req, _res, next) => {
        if (hasNonJsonBody(req)) {
          throw new AppError(415, 'unsupported_media_type', 'Send the request body as JSON (Content-Type: application/json).');
        }
        next();
      });
    }
    if (bodyKind.kind === 'raw') {
      // Every media type is kept as bytes: a signature is computed over exactly what was sent.
      chain.push(express.raw({ type: () => true, limit: bodyKind.maxBytes }));
    }
    if (bodyKind.kind === 'multipart') {
      chain.push((req, _res, next) => {
        if (req.is('multipart/form-data') === false || req.get('content-type') === undefined) {
          throw new AppError(415, 'unsupported_media_type', 'Send the file as a form upload (Content-Type: multipart/form-data).');
        }
        next();
      });
    }
    if (route.access !== 'public') {
      const access = route.access;
      chain.push(async (req, _res, next) => {
        req.auth = await authenticateRequest(deps, req);
        // The role checked is the one just read from the database, not the one in the token.
        if (!access.includes(req.auth.role)) throw AppError.forbidden();
        next();
      });
    }
    for (const name of route.limiters ?? []) chain.push(limiters[name]);
    // A file is read only for a caller who may send it, after the role and rate checks.
    // The parser stops reading at the configured limit (a 2 MB log limit reads at most 2 MB, not the ceiling).
    if (bodyKind.kind === 'multipart') {
      const limit = Math.min(bodyKind.maxBytes, bodyKind.configuredMaxBytes?.(deps.config) ?? bodyKind.maxBytes);
      chain.push(multipartParser(bodyKind.field, limit));
    }
    chain.push(routeHandler(route, deps));
    router[route.method](route.path, ...chain);
  }
  return router;
}
