import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from './helpers/context.ts';

let ctx: TestContext;

beforeAll(() => {
  ctx = createTestContext();
});

afterAll(async () => {
  await ctx.close();
});

/** The CSP's directives by name, each with its sources. */
function directives(header: string | undefined): Record<string, string[]> {
  const out: Record<string, string[]> = {};
  for (const part of (header ?? '').split(';')) {
    const [name, ...sources] = part.trim().split(/\s+/);
    if (name) out[name] = sources;
  }
  return out;
}

describe('security headers (helmet)', () => {
  it('keep every answer from being framed, sniffed or leaking a referrer, API errors included', async () => {
    for (const path of ['/api/health', '/api/scenarios', '/api/no-such-route', '/some/page']) {
      const response = await request(ctx.app).get(path);
      expect(response.headers['x-content-type-options'], path).toBe('nosniff');
      expect(response.headers['x-frame-options'], path).toBe('DENY');
      expect(response.headers['referrer-policy'], path).toBe('no-referrer');
      expect(response.headers['x-powered-by'], path).toBeUndefined();
      const csp = directives(response.headers['content-security-policy']);
      // Not framed by any origin (the header wins over X-Frame-Options in browsers that read both).
      expect(csp['frame-ancestors'], path).toEqual(["'none'"]);
      // Scripts only from the product's own origin: no inline script, no eval, no CDN.
      expect(csp['script-src'], path).toEqual(["'self'"]);
      expect(csp['default-src'], path).toEqual(["'self'"]);
      expect(csp['connect-src'], path).toEqual(["'self'"]);
      expect(csp['object-src'], path).toEqual(["'none'"]);
    }
  });
});
