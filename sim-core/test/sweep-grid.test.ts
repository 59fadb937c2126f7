import { describe, expect, it } from 'vitest'
import {
  axisValues,
  countPoints,
  defaultScenario,
  evaluateStaticPoint,
  computeBalance,
  pointAt,
  resolveAxes,
  type ResolvedAxis,
} from '../src/index.ts'

const axes: ResolvedAxis[] = [
  { path: 'springs.0.seatForceN', values: [100, 130, 160] },
  { path: 'exhaust.ratio', values: [1, 1.5] },
]

describe('sweep grid', () => {
  it('spells out a range with its ends exact', () => {
    expect(axisValues({ path: 'exhaust.ratio', range: { from: 1, to: 2, count: 5 } })).toEqual([1, 1.25, 1.5, 1.75, 2])
    expect(axisValues({ path: 'exhaust.ratio', range: { from: 1.3, to: 1.3, count: 1 } })).toEqual([1.3])
  })

  it('numbers points with the first axis slowest and recomputes any point alone', () => {
    const s = defaultScenario()
    expect(countPoints(axes)).toBe(6)
    const p = pointAt(s, axes, 3)
    expect(p.coords).toEqual([1, 1])
    expect(p.values).toEqual([130, 1.5])
    const spring = p.scenario.springs[0]
    expect(spring?.from === 'seat' ? spring.seatForceN : NaN).toBe(130)
    expect(p.scenario.exhaust.ratio).toBe(1.5)
    // The scenario it came from is untouched.
    expect(s.exhaust.ratio).toBe(1.5)
    expect(s.springs[0]).toEqual(defaultScenario().springs[0])
    expect(() => pointAt(s, axes, 6)).toThrow(/outside 0…5/)
  })

  it('evaluates a static point as the balance does', () => {
    const p = pointAt(defaultScenario(), axes, 4)
    const r = evaluateStaticPoint(p.scenario)
    const b = computeBalance(p.scenario)
    expect(r.status).toBe('ok')
    expect(r.crackBoostPa).toBe(b.crack.status === 'opens' ? b.crack.boostPa : null)
  })

  it('names an axis with zero values, a path that is not a number, and a value the scenario refuses', () => {
    const s = defaultScenario()
    const empty = resolveAxes(s, [{ path: 'exhaust.ratio', values: [] }])
    expect(empty).toEqual({ ok: false, issues: [{ path: 'axes.0.values', message: 'needs at least one value' }] })
    const badPath = resolveAxes(s, [{ path: 'wastegate.colour', values: [1] }])
    expect(badPath.ok).toBe(false)
    if (!badPath.ok) expect(badPath.issues[0]?.path).toBe('axes.0.path')
    const negative = resolveAxes(s, [{ path: 'springs.0.seatForceN', values: [100, -5] }])
    expect(negative.ok).toBe(false)
    if (!negative.ok) expect(negative.issues[0]).toMatchObject({ path: 'axes.0.values.1' })
    const ok = resolveAxes(s, [{ path: 'exhaust.ratio', range: { from: 1, to: 2, count: 3 } }])
    expect(ok).toEqual({ ok: true, axes: [{ path: 'exhaust.ratio', values: [1, 1.5, 2] }] })
  })

  it('refuses the same path on two axes and more than three axes', () => {
    const s = defaultScenario()
    const twice = resolveAxes(s, [
      { path: 'exhaust.ratio', values: [1] },
      { path: 'exhaust.ratio', values: [2] },
    ])
    expect(twice.ok).toBe(false)
    const four = resolveAxes(s, Array.from({ length: 4 }, () => ({ path: 'exhaust.ratio', values: [1] })))
    expect(four).toMatchObject({ ok: false, issues: [{ path: 'axes' }] })
  })
})
