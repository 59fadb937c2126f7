import { Router, type Request, type RequestHandler } from 'express';
import { ZodError, type z } from 'zod';
import { AppError } from '../errors/index.ts';
import { authenticateRequest } from '../middleware/authenticate.ts';
import { createLimiters } from '../middleware/rate-limits.ts';
import { Reply, type AnyRoute, type ApiDeps } from './route-def.ts';

const JSON_TYPES = ['application/json', 'application/*+json'];

/** A body that is there but is not JSON; an empty POST is left for the route's schema to judge. */
function hasNonJsonBody(req: Request): boolean {
  if (req.get('content-length') === '0') return false;
  return req.is(JSON_TYPES) === false;
}

function parsePart<S extends z.ZodType | undefined>(schema: S, value: unknown): unknown {
  return schema ? schema.parse(value) : undefined;
}

function routeHandler(route: AnyRoute, deps: ApiDeps): RequestHandler {
  return async (req, res) => {
    let params: unknown;
    try {
      params = parsePart(route.params, req.params);
    } catch (error) {
      // A path id that is not even an id cannot name a record: "not found", never a 400 or a cast error.
      if (error instanceof ZodError) throw AppError.notFound(route.resource ?? 'That');
      throw error;
    }
    const query = parsePart(route.query, req.query);
    const rawBody: unknown = req.body;
    const body =
      route.body && !(route.bodyOptional && rawBody === undefined) ? route.body.parse(rawBody) : undefined;

    const result: unknown = await route.handler({ deps, auth: req.auth, params, query, body });
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
    if (route.method !== 'get') {
      chain.push((req, _res, next) => {
        if (hasNonJsonBody(req)) {
          throw new AppError(415, 'unsupported_media_type', 'Send the request body as JSON (Content-Type: application/json).');
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
    chain.push(routeHandler(route, deps));
    router[route.method](route.path, ...chain);
  }
  return router;
}
