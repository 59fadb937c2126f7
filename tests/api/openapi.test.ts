import { routeTable } from '@crackpoint/api';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from './helpers/context.ts';

interface Operation {
  operationId?: string;
  security?: Record<string, string[]>[];
  requestBody?: { required?: boolean; content: Record<string, { schema: unknown }> };
  parameters?: { name: string; in: string; required?: boolean }[];
  responses: Record<string, { content?: Record<string, { schema: unknown }> }>;
}
interface Document {
  openapi: string;
  info: { title: string };
  paths: Record<string, Record<string, Operation>>;
  components: { schemas: Record<string, unknown>; securitySchemes: Record<string, unknown> };
}

let ctx: TestContext;
let doc: Document;

beforeAll(async () => {
  ctx = createTestContext();
  const response = await request(ctx.app).get('/api/openapi.json');
  expect(response.status).toBe(200);
  expect(response.headers['content-type']).toMatch(/application\/json/);
  doc = response.body as Document;
});

afterAll(async () => {
  await ctx.close();
});

const openApiPath = (path: string) => `/api${path.replace(/:(\w+)/g, '{$1}')}`;

function refsIn(value: unknown, found: string[] = []): string[] {
  if (Array.isArray(value)) value.forEach((item) => refsIn(item, found));
  else if (typeof value === 'object' && value !== null) {
    for (const [key, item] of Object.entries(value)) {
      if (key === '$ref' && typeof item === 'string') found.push(item);
      else refsIn(item, found);
    }
  }
  return found;
}

describe('GET /api/openapi.json', () => {
  it('is an OpenAPI 3.1 document anyone may read', () => {
    expect(doc.openapi).toBe('3.1.0');
    expect(doc.info.title).toBe('Crackpoint API');
    expect(doc.components.securitySchemes.bearerAuth).toMatchObject({ type: 'http', scheme: 'bearer' });
  });

  it('describes every route of the route table, by its id, and nothing else', () => {
    const documented = Object.entries(doc.paths).flatMap(([path, operations]) =>
      Object.entries(operations).map(([method, operation]) => `${method} ${path} ${operation.operationId}`),
    );
    const expected = routeTable.map((route) => `${route.method} ${openApiPath(route.path)} ${route.id}`);
    expect(documented.sort()).toEqual(expected.sort());
  });

  for (const route of routeTable) {
    it(`describes ${route.method.toUpperCase()} /api${route.path}: token, parameters, body and answers`, () => {
      const operation = doc.paths[openApiPath(route.path)]?.[route.method];
      expect(operation).toBeDefined();
      if (!operation) return;
      expect(operation.security).toEqual(route.access === 'public' ? [] : [{ bearerAuth: [] }]);
      for (const name of [...route.path.matchAll(/:(\w+)/g)].map((m) => m[1])) {
        expect(operation.parameters?.find((p) => p.in === 'path' && p.name === name)?.required).toBe(true);
      }
      // A form upload or a raw body is described whether or not text fields are parsed beside it.
      const kind = route.requestBody?.kind ?? 'json';
      expect(operation.requestBody !== undefined).toBe(route.body !== undefined || kind !== 'json');
      if (kind === 'json' && route.body) {
        expect(operation.requestBody?.required).toBe(!route.bodyOptional);
        expect(operation.requestBody?.content['application/json']?.schema).toBeDefined();
      }
      if (kind !== 'json') {
        expect(operation.requestBody?.required).toBe(true);
        expect(operation.requestBody?.content[kind === 'raw' ? 'application/octet-stream' : 'multipart/form-data']?.schema).toBeDefined();
      }
      expect(operation.responses[String(route.success.status)]).toBeDefined();
      if (route.access !== 'public') expect(operation.responses['401']?.content?.['application/json']?.schema).toEqual({ $ref: '#/components/schemas/Error' });
      if (route.access !== 'public' && route.access.length < 4) expect(operation.responses['403']).toBeDefined();
      if (route.method !== 'get') expect(Object.keys(operation.responses)).toEqual(expect.arrayContaining(['400', '413', '415']));
      for (const status of route.errors ?? []) expect(operation.responses[String(status)]).toBeDefined();
    });
  }

  it('resolves every reference inside the document', () => {
    const refs = [...new Set(refsIn(doc))];
    expect(refs.length).toBeGreaterThan(5);
    for (const ref of refs) {
      const name = ref.replace('#/components/schemas/', '');
      expect(doc.components.schemas, ref).toHaveProperty(name);
    }
  });

  it("describes a scenario with sim-core's own fields and limits", () => {
    const scenario = doc.components.schemas.Scenario as { properties: Record<string, unknown>; required: string[] };
    expect(scenario.required).toEqual(expect.arrayContaining(['engine', 'wastegate', 'springs', 'control', 'supply', 'exhaust']));
    expect(scenario.properties.wastegate).toEqual({ $ref: '#/components/schemas/Wastegate' });
    const wastegate = doc.components.schemas.Wastegate as { properties: Record<string, { maximum?: number }> };
    expect(wastegate.properties.valveDiameterM?.maximum).toBe(0.1);
    const create = doc.paths['/api/scenarios']?.post?.requestBody?.content['application/json']?.schema as { properties: Record<string, unknown> };
    expect(create.properties.data).toEqual({ $ref: '#/components/schemas/Scenario' });
  });
});
