import { z } from 'zod';
import { buildOpenApiDocument } from '../openapi/build-document.ts';
import { defineRoute } from './route-def.ts';
import { routeTable } from './route-table.ts';

let document: ReturnType<typeof buildOpenApiDocument> | undefined;

export const openApiRoutes = [
  defineRoute({
    id: 'getOpenApi',
    method: 'get',
    path: '/openapi.json',
    summary: 'This description of the API (OpenAPI 3.1)',
    tag: 'Service',
    access: 'public',
    scope: 'public',
    success: { status: 200, description: 'The OpenAPI document', schema: z.looseObject({ openapi: z.literal('3.1.0'), paths: z.record(z.string(), z.unknown()) }) },
    // Read at call time: the table includes this route, so it is complete only once every module has loaded.
    handler: () => (document ??= buildOpenApiDocument(routeTable)),
  }),
];
