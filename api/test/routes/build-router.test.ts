import express from 'express';
import type { Knex } from 'knex';
import { pino } from 'pino';
import request from 'supertest';
import { afterEach, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { loadConfig } from '../../src/config.ts';
import { errorMiddleware } from '../../src/errors/index.ts';
import { buildRouter } from '../../src/routes/build-router.ts';
import { defineRoute, StreamReply, type AnyRoute, type ApiDeps } from '../../src/routes/route-def.ts';
import type { FitRunnerLike } from '../../src/services/datalogs/fit-runner.ts';
import type { PullRunnerLike } from '../../src/services/pull/pull-runner.ts';
import type { SweepQueue } from '../../src/services/sweeps.ts';

// Public routes only: nothing here reaches the database, the queue or the pull runner.
const deps: ApiDeps = {
  knex: {} as Knex,
  config: loadConfig({ NODE_ENV: 'test' }),
  queue: {} as SweepQueue,
  logger: pino({ level: 'silent' }),
  pulls: {} as PullRunnerLike,
  fits: {} as FitRunnerLike,
};

function appWith(routes: AnyRoute[]) {
  const app = express();
  app.use('/api', buildRouter(routes, deps));
  app.use(errorMiddleware);
  return app;
}

const uploadRoute = defineRoute({
  id: 'testUpload',
  method: 'post',
  path: '/upload',
  summary: 'Echo an upload',
  tag: 'Test',
  access: 'public',
  scope: 'public',
  requestBody: { kind: 'multipart', field: 'file', maxBytes: 1024 },
  body: z.object({ label: z.string().min(1) }).strict(),
  success: { status: 201, description: 'Echoed' },
  handler: ({ body, file }) => ({ label: body.label, file: file ? { name: file.originalName, size: file.size, text: file.buffer.toString('utf8') } : null }),
});

const rawRoute = defineRoute({
  id: 'testRaw',
  method: 'post',
  path: '/raw',
  summary: 'Echo the exact bytes',
  tag: 'Test',
  access: 'public',
  scope: 'public',
  requestBody: { kind: 'raw', maxBytes: 64 },
  success: { status: 200, description: 'Echoed' },
  handler: ({ rawBody, headers }) => ({ hex: rawBody?.toString('hex') ?? null, signature: headers['x-signature'] ?? null }),
});

describe('routes that read a form upload', () => {
  it('hands the file and the parsed text fields to the handler', async () => {
    const res = await request(appWith([uploadRoute]))
      .post('/api/upload')
      .field('label', 'third gear pull')
      .attach('file', Buffer.from('time_s,boost_psi\n0,1\n'), 'pull.csv');
    expect(res.status).toBe(201);
    expect(res.body).toEqual({ label: 'third gear pull', file: { name: 'pull.csv', size: 21, text: 'time_s,boost_psi\n0,1\n' } });
  });

  it('answers 413 naming the field when the file is over the limit', async () => {
    const res = await request(appWith([uploadRoute]))
      .post('/api/upload')
      .field('label', 'big')
      .attach('file', Buffer.alloc(2048, 65), 'big.csv');
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('file_too_large');
    expect(res.body.error.fields).toEqual({ file: 'must be at most 1 kB' });
  });

  it('answers 400 naming the part when the file comes under another field name', async () => {
    const res = await request(appWith([uploadRoute])).post('/api/upload').field('label', 'x').attach('log', Buffer.from('a'), 'a.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.fields).toHaveProperty('log');
  });

  it('answers 415 to a JSON body and 400 naming the text field the schema refuses', async () => {
    const json = await request(appWith([uploadRoute])).post('/api/upload').send({ label: 'x' });
    expect(json.status).toBe(415);
    const missing = await request(appWith([uploadRoute])).post('/api/upload').attach('file', Buffer.from('a'), 'a.csv');
    expect(missing.status).toBe(400);
    expect(missing.body.error.fields).toHaveProperty('label');
  });
});

describe('routes that read the raw body', () => {
  it('keeps the bytes exactly as sent, whatever the media type, with the headers', async () => {
    const res = await request(appWith([rawRoute]))
      .post('/api/raw')
      .set('Content-Type', 'application/json')
      .set('X-Signature', 't=1,v1=abc')
      .send('{"a": 1 }');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ hex: Buffer.from('{"a": 1 }').toString('hex'), signature: 't=1,v1=abc' });
  });

  it('answers 413 over its limit', async () => {
    const res = await request(appWith([rawRoute])).post('/api/raw').set('Content-Type', 'text/plain').send('x'.repeat(200));
    expect(res.status).toBe(413);
  });
});

describe('routes that stream their answer', () => {
  let closed: Promise<void> | undefined;
  afterEach(() => {
    closed = undefined;
  });

  it('writes every piece of a CSV source as a download', async () => {
    async function* rows() {
      yield 'index,boost_psi\n';
      for (let i = 0; i < 3; i++) yield `${i},${10 + i}\n`;
    }
    const route = defineRoute({
      id: 'testCsv',
      method: 'get',
      path: '/rows.csv',
      summary: 'Rows',
      tag: 'Test',
      access: 'public',
      scope: 'public',
      produces: 'text/csv',
      success: { status: 200, description: 'Rows' },
      handler: () => new StreamReply({ contentType: 'text/csv; charset=utf-8', source: rows(), filename: 'rows.csv' }),
    });
    const res = await request(appWith([route])).get('/api/rows.csv');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('text/csv; charset=utf-8');
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename="?rows\.csv"?$/);
    expect(res.text).toBe('index,boost_psi\n0,10\n1,11\n2,12\n');
  });

  it('closes the source and aborts the signal when the client leaves mid-stream', async () => {
    let aborted = false;
    let finished: () => void = () => {};
    closed = new Promise((resolve) => {
      finished = resolve;
    });
    const route = defineRoute({
      id: 'testEvents',
      method: 'get',
      path: '/events',
      summary: 'Events',
      tag: 'Test',
      access: 'public',
      scope: 'public',
      produces: 'text/event-stream',
      success: { status: 200, description: 'Events' },
      handler: ({ signal }) => {
        signal.addEventListener('abort', () => {
          aborted = true;
        });
        async function* events() {
          try {
            for (let n = 0; ; n++) {
              yield `event: tick\ndata: ${n}\n\n`;
              await new Promise((resolve) => setTimeout(resolve, 10));
            }
          } finally {
            finished();
          }
        }
        return new StreamReply({ contentType: 'text/event-stream', source: events() });
      },
    });
    const server = appWith([route]).listen(0, '127.0.0.1');
    await new Promise((resolve) => server.once('listening', resolve));
    const { port } = server.address() as { port: number };
    const controller = new AbortController();
    const res = await fetch(`http://127.0.0.1:${port}/api/events`, { signal: controller.signal });
    expect(res.headers.get('content-type')).toBe('text/event-stream');
    expect(res.headers.get('cache-control')).toBe('no-cache');
    const reader = res.body!.getReader();
    const first = await reader.read();
    expect(new TextDecoder().decode(first.value)).toContain('event: tick\ndata: 0\n\n');
    controller.abort();
    await closed;
    expect(aborted).toBe(true);
    server.closeAllConnections();
    await new Promise((resolve) => server.close(resolve));
  });
});
