import { describe, expect, it } from 'vitest';
import { AppError } from '../../src/errors/app-error.ts';
import { parseId } from '../../src/schemas/common.ts';

describe('parseId', () => {
  it('passes a uuid through', () => {
    expect(parseId('0b9c6f6e-8f0e-4c3a-9d55-2d1b2f0c3a11', 'Scenario')).toBe('0b9c6f6e-8f0e-4c3a-9d55-2d1b2f0c3a11');
  });

  it('treats a malformed id as not found, never as a 400', () => {
    let error: unknown;
    try {
      parseId('42; drop table scenarios', 'Scenario');
    } catch (caught) {
      error = caught;
    }
    expect(error).toBeInstanceOf(AppError);
    expect((error as AppError).status).toBe(404);
    expect((error as AppError).message).toBe('Scenario was not found.');
  });
});
