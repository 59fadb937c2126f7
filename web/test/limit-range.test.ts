import { describe, expect, it } from 'vitest'
import { limitRange } from '@/composables/limit-range'

describe('limitRange', () => {
  it('draws a limit close above the curves and makes room for it', () => {
    expect(limitRange(20, 25)).toEqual({ top: 27, drawLimit: true })
    const over = limitRange(30, 25)
    expect(over.drawLimit).toBe(true)
    expect(over.top).toBeCloseTo(32.4, 9)
  })

  it('keeps to the curves when the limit is far above them', () => {
    expect(limitRange(5, 25)).toEqual({ top: 5.5, drawLimit: false })
    expect(limitRange(5, null)).toEqual({ top: 5.5, drawLimit: false })
  })

  it('still gives a usable axis when there is nothing to plot', () => {
    expect(limitRange(0, null).top).toBeGreaterThan(0)
    expect(limitRange(Number.NEGATIVE_INFINITY, 1)).toEqual({ top: 1.08, drawLimit: true })
  })
})
