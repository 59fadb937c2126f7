import { describe, expect, it } from 'vitest'
import { defaultScenario, fitParametersOf, springTotals, toSI, units, wastegateAreas, withFitParameters } from '../../src/index.ts'
import { expectClose } from '../expect-close.ts'
import { scenarioWith } from '../pull/pull-helpers.ts'

describe('withFitParameters', () => {
  it('writes the ratio in ratio mode and the seat force on the spring', () => {
    const base = scenarioWith({ exhaust: { mode: 'turbine', ratio: 1.5 } })
    const fitted = withFitParameters(base, { ratio: 1.83, seatForceN: 151 })
    expect(fitted.exhaust.mode).toBe('ratio')
    expect(fitted.exhaust.ratio).toBe(1.83)
    expect(fitted.springs).toEqual([{ from: 'seat', seatForceN: 151, rateNPerM: 3500 }])
    expect(base.exhaust.mode).toBe('turbine')
    expect(base.springs[0]).toEqual({ from: 'seat', seatForceN: 129, rateNPerM: 3500 })
  })

  it('shares the seat force among nested springs as they shared it, bench springs by their seat force', () => {
    const base = scenarioWith({
      springs: [
        { from: 'seat', seatForceN: 80, rateNPerM: 2000 },
        { from: 'bench', benchCrackPressurePa: toSI(units.psi, 3), rateNPerM: 1500 },
      ],
    })
    const areas = wastegateAreas(base.wastegate)
    const benchN = toSI(units.psi, 3) * areas.bottomM2
    const fitted = withFitParameters(base, { ratio: 1.5, seatForceN: 2 * (80 + benchN) })
    expect(fitted.springs.map((s) => s.from)).toEqual(['seat', 'seat'])
    expectClose(fitted.springs[0]!.from === 'seat' ? fitted.springs[0]!.seatForceN : 0, 160, 1e-9, 'first spring')
    expectClose(fitted.springs[1]!.from === 'seat' ? fitted.springs[1]!.seatForceN : 0, 2 * benchN, 1e-9, 'second spring')
    expect(springTotals(fitted.springs, areas).rateNPerM).toBe(3500)
    expectClose(fitParametersOf(fitted).seatForceN, 2 * (80 + benchN), 1e-9, 'total')
  })

  it('gives the first spring all of a seat force the springs had none of', () => {
    const base = scenarioWith({ springs: [{ from: 'seat', seatForceN: 0, rateNPerM: 1000 }, { from: 'seat', seatForceN: 0, rateNPerM: 500 }] })
    const fitted = withFitParameters(base, { ratio: 1.5, seatForceN: 90 })
    expect(fitted.springs).toEqual([
      { from: 'seat', seatForceN: 90, rateNPerM: 1000 },
      { from: 'seat', seatForceN: 0, rateNPerM: 500 },
    ])
  })

  it('refuses a negative seat force or a ratio that is not positive, naming it', () => {
    expect(() => withFitParameters(defaultScenario(), { ratio: 1.5, seatForceN: -1 })).toThrow('seatForceN')
    expect(() => withFitParameters(defaultScenario(), { ratio: 0, seatForceN: 10 })).toThrow('ratio')
  })
})
