import { describe, expect, it } from 'vitest';
import { idParamsSchema } from '../../src/schemas/common.ts';

describe('idParamsSchema', () => {
  it('passes a uuid through', () => {
    expect(idParamsSchema.parse({ id: '0b9c6f6e-8f0e-4c3a-9d55-2d1b2f0c3a11' })).toEqual({ id: '0b9c6f6e-8f0e-4c3a-9d55-2d1b2f0c3a11' });
  });

  it('refuses anything else before it can reach a query', () => {
    expect(idParamsSchema.safeParse({ id: '42; drop table scenarios' }).success).toBe(false);
    expect(idParamsSchema.safeParse({ id: "' or 1=1 --" }).success).toBe(false);
  });
});
