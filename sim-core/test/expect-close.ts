import { expect } from 'vitest'

/** |actual − expected| ≤ tolerance, with both numbers in the failure message. */
export function expectClose(actual: number, expected: number, tolerance: number, what = 'value'): void {
  expect(Number.isFinite(actual), `${what} is not finite: ${actual}`).toBe(true)
  expect(
    Math.abs(actual - expected),
    `${what}: got ${actual}, expected ${expected} ± ${tolerance}`,
  ).toBeLessThanOrEqual(tolerance)
}
