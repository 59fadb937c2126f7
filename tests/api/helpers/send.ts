import type { Express } from 'express';
import request from 'supertest';
import type { Prepared } from './route-fixtures.ts';

/** Sends a prepared request with the route's method under /api; `token` null sends no Authorization. */
export function send(app: Express, method: string, prepared: Prepared, token: string | null) {
  const agent = request(app);
  const url = `/api${prepared.path}`;
  let req =
    method === 'get' ? agent.get(url)
    : method === 'post' ? agent.post(url)
    : method === 'patch' ? agent.patch(url)
    : method === 'put' ? agent.put(url)
    : method === 'delete' ? agent.delete(url)
    : undefined;
  if (!req) throw new Error(`no such method ${method}`);
  if (prepared.query) req = req.query(prepared.query);
  const bearer = prepared.token ?? token;
  if (bearer !== null) req = req.set('Authorization', `Bearer ${bearer}`);
  if (prepared.headers) req = req.set(prepared.headers);
  if (prepared.file) {
    const { field, filename, content, contentType } = prepared.file;
    req = req.attach(field, content, { filename, contentType });
    for (const [name, value] of Object.entries((prepared.body ?? {}) as Record<string, unknown>)) req = req.field(name, String(value));
    return req;
  }
  return prepared.body === undefined ? req : req.send(prepared.body as object);
}
