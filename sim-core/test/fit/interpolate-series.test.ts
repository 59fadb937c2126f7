import { describe, expect, it } from 'vitest'
import { interpolateSeries } from '../../src/index.ts'

describe('interpolateSeries', () => {
  it('interpolates linearly between samples and holds the ends', () => {
    const t = [0, 1, 2, 4]
    const v = [0, 10, 30, 30]
    expect(interpolateSeries(t, v, [-1, 0, 0.5, 1, 1.25, 3, 4, 9])).toEqual([0, 0, 5, 10, 15, 30, 30, 30])
  })

  it('answers times asked in any order', () => {
    expect(interpolateSeries([0, 1, 2], [0, 2, 4], [1.5, 0.5, 1.75])).toEqual([3, 1, 3.5])
  })

  it('refuses series of different lengths', () => {
    expect(() => interpolateSeries([0, 1], [0], [0.5])).toThrow('one length')
  })
})
