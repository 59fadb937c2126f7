import { springTotals, wastegateAreas } from '../geometry.ts'
import type { Scenario } from '../scenario.ts'

/** The two numbers a datalog fit adjusts. */
export interface FitParameters {
  /** Drive-to-boost pressure ratio (gauge over gauge). */
  ratio: number
  /** Total spring seat force (nested springs added), N. */
  seatForceN: number
}

/** The scenario's own drive-to-boost ratio and total seat force (a bench-tested spring counted by its seat force). */
export function fitParametersOf(s: Scenario): FitParameters {
  return { ratio: s.exhaust.ratio, seatForceN: springTotals(s.springs, wastegateAreas(s.wastegate)).seatForceN }
}

/**
 * A copy of the scenario in ratio mode with the given ratio and total seat force. Nested springs keep their
 * share of the seat force and their rates; every spring is written by its seat force, since a fitted seat force
 * is no longer a bench reading. The input is not changed.
 */
export function withFitParameters(s: Scenario, p: FitParameters): Scenario {
  if (!(Number.isFinite(p.ratio) && p.ratio > 0)) throw new RangeError(`ratio must be a positive number, not ${p.ratio}`)
  if (!(Number.isFinite(p.seatForceN) && p.seatForceN >= 0)) {
    throw new RangeError(`seatForceN must be a number of at least 0, not ${p.seatForceN}`)
  }
  const areas = wastegateAreas(s.wastegate)
  const total = springTotals(s.springs, areas).seatForceN
  const springs = s.springs.map((spring, index) => {
    const own = spring.from === 'seat' ? spring.seatForceN : spring.benchCrackPressurePa * areas.bottomM2
    // With no seat force to share out, the first spring carries all of it.
    const share = total > 0 ? own / total : index === 0 ? 1 : 0
    return { from: 'seat' as const, seatForceN: p.seatForceN * share, rateNPerM: spring.rateNPerM }
  })
  return { ...s, exhaust: { ...s.exhaust, mode: 'ratio', ratio: p.ratio }, springs }
}
