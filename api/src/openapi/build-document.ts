import { OpenAPIRegistry, OpenApiGeneratorV31, zodToOpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { engineSchema, scenarioSchema, springSchema, supplySchema, turboSchema, wastegateSchema } from '@crackpoint/sim-core';
import { z } from 'zod';
import type { AnyRoute } from '../routes/route-def.ts';

export const errorBodySchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    /** Field path (dotted, e.g. `data.wastegate.valveDiameterM`) → what is wrong with it. */
    fields: z.record(z.string(), z.string()).optional(),
  }),
});

/**
 * Schemas described once under components and referred to wherever they appear; sim-core's own
 * schemas (it owns what their fields mean, SI units) cannot be given a name by `.openapi()`, as they
 * are made before any extension could be applied, so their name goes into the library's registry.
 */
const NAMED_SCHEMAS: readonly [string, z.ZodType][] = [
  ['Error', errorBodySchema],
  ['Scenario', scenarioSchema],
  ['Wastegate', wastegateSchema],
  ['Spring', springSchema],
  ['Turbo', turboSchema],
  ['Engine', engineSchema],
  ['Supply', supplySchema],
];
for (const [refId, schema] of NAMED_SCHEMAS) {
  if (!zodToOpenAPIRegistry.has(schema)) zodToOpenAPIRegistry.add(schema, { _internal: { refId } });
}

const ERROR_DESCRIPTIONS: Record<number, string> = {
  400: 'Validation failed (every field named in `fields`) or the body is not valid JSON',
  401: 'No token, or a token that is expired, signed out or not valid; or wrong credentials',
  403: 'The role of the signed-in member does not allow this',
  404: "Not found (also what another workspace's record answers)",
  409: 'Conflict: a stale version, a name or e-mail taken, or a part still in use',
  413: 'The body is larger than the API accepts',
  402: 'Not enough compute units left this month for what was asked',
  415: 'The body is not in the media type the route reads (JSON unless it says otherwise)',
  422: 'Understood but cannot be done as asked (named in `fields` where a field is the cause)',
  429: 'Too many attempts; wait and try again',
  500: 'Something went wrong on the server (no details are given)',
  503: 'A service the request needs is not answering in time',
};

/** Express `/scenarios/:id` → OpenAPI `/api/scenarios/{id}`. */
export function openApiPath(route: Pick<AnyRoute, 'path'>): string {
  return `/api${route.path.replace(/:(\w+)/g, '{$1}')}`;
}

function errorStatuses(route: AnyRoute): number[] {
  const statuses = new Set<number>(route.errors ?? []);
  if (route.params || route.query || route.body || route.method !== 'get') statuses.add(400);
  if (route.access !== 'public') statuses.add(401);
  if (route.access !== 'public' && route.access.length < 4) statuses.add(403);
  if (route.params || route.scope === 'reference') statuses.add(404);
  if (route.method !== 'get') {
    statuses.add(413);
    statuses.add(415);
  }
  statuses.add(500);
  return [...statuses].sort((a, b) => a - b);
}

/** JSON by default; a form upload lists its text fields beside the file part; a raw body is any bytes. */
function requestBody(route: AnyRoute) {
  const kind = route.requestBody ?? { kind: 'json' as const };
  if (kind.kind === 'raw') {
    return { body: { required: true, content: { 'application/octet-stream': { schema: z.string() } } } };
  }
  if (kind.kind === 'multipart') {
    const fields = route.body instanceof z.ZodObject ? route.body.shape : {};
    const form = z.object({ ...fields, [kind.field]: z.string().meta({ format: 'binary', description: `at most ${kind.maxBytes} bytes` }) });
    return { body: { required: true, content: { 'multipart/form-data': { schema: form } } } };
  }
  if (!route.body) return {};
  return { body: { required: !route.bodyOptional, content: { 'application/json': { schema: route.body } } } };
}

/** The OpenAPI 3.1 description of every route of the table, made from the same zod schemas the API parses with. */
export function buildOpenApiDocument(routes: readonly AnyRoute[]) {
  const registry = new OpenAPIRegistry();
  registry.registerComponent('securitySchemes', 'bearerAuth', {
    type: 'http',
    scheme: 'bearer',
    bearerFormat: 'JWT',
    description: 'The access token from sign-in or registration; it expires after a short time.',
  });
  const ErrorBody = errorBodySchema;

  for (const route of routes) {
    const roles = route.access === 'public' ? 'Anyone, without signing in.' : `Roles: ${route.access.join(', ')}.`;
    const produces = route.produces ?? 'application/json';
    const successContent = route.success.schema
      ? { [produces]: { schema: route.success.schema } }
      : produces === 'application/json'
        ? undefined
        : { [produces]: { schema: z.string() } };
    const responses: Record<string, { description: string; content?: Record<string, { schema: z.ZodType }> }> = {
      [route.success.status]: {
        description: route.success.description,
        ...(successContent ? { content: successContent } : {}),
      },
    };
    for (const status of errorStatuses(route)) {
      responses[status] = { description: ERROR_DESCRIPTIONS[status] ?? 'Error', content: { 'application/json': { schema: ErrorBody } } };
    }
    registry.registerPath({
      method: route.method,
      path: openApiPath(route),
      operationId: route.id,
      summary: route.summary,
      description: roles,
      tags: [route.tag],
      security: route.access === 'public' ? [] : [{ bearerAuth: [] }],
      request: {
        ...(route.params ? { params: route.params as z.ZodObject } : {}),
        ...(route.query ? { query: route.query as z.ZodObject } : {}),
        ...requestBody(route),
      },
      responses,
    });
  }

  const generator = new OpenApiGeneratorV31([...registry.definitions, ...NAMED_SCHEMAS.map(([, schema]) => schema)]);
  return generator.generateDocument({
    openapi: '3.1.0',
    info: {
      title: 'Crackpoint API',
      version: '0.1.0',
      description:
        'Wastegate spring and port-arrangement predictions for turbocharged engines. JSON throughout; every number is SI ' +
        '(Pa gauge for boost, N, m, kg, s, K). Errors are `{ error: { code, message, fields? } }`. Boost and compressed gas ' +
        'can hurt people and engines: results are estimates, and the hardware makers\u2019 limits and local codes come first.',
    },
    servers: [{ url: '/' }],
  });
}
