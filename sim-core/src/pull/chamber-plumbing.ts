import { circleArea } from '../geometry.ts'
import type { Scenario } from '../scenario.ts'

/**
 * What each actuator chamber is connected to, per port arrangement (MODEL.md §4 Control). It mirrors the
 * static level's (α, β) of balance.ts, orifice by orifice, so a settled pull meets the static balance:
 * a feed from boost or from the supply, a vent to the air, a solenoid whose open area is its duty times its
 * bore area (PWM averaged over its cycle).
 */

/** Where an orifice leads: the intake manifold, the air, the supply's regulated outlet, or a bleed of boost. */
export type SourceKind = 'intake' | 'ambient' | 'supply' | 'bleed'

export interface Connection {
  source: SourceKind
  /** C_d·A, m² (at full duty when `byDuty`). */
  dischargeAreaM2: number
  /** The area is scaled by the solenoid's duty. */
  byDuty: boolean
}

export interface Plumbing {
  top: Connection[]
  bottom: Connection[]
  /** Fraction of boost a bleed sends to the top chamber (bleed-top only). */
  bleedFraction: number
  /** Fixed duty of a solenoid (3- and 4-port), or null when there is none or it is in closed loop. */
  fixedDuty: number | null
  closedLoop: boolean
}

export function chamberPlumbing(s: Scenario): Plumbing {
  const w = s.wastegate
  const cd = w.portDischargeCoefficient
  const port = cd * circleArea(w.portDiameterM)
  const feed = (source: SourceKind, dischargeAreaM2 = port, byDuty = false): Connection => ({ source, dischargeAreaM2, byDuty })
  const vent = feed('ambient')
  const c = s.control
  const base = { bleedFraction: 0, fixedDuty: null, closedLoop: false }
  switch (c.kind) {
    case 'none':
      return { ...base, top: [vent], bottom: [vent] }
    case 'bottom-boost':
      return { ...base, top: [vent], bottom: [feed('intake')] }
    case 'top-supply':
      return { ...base, top: [feed('supply')], bottom: [vent] }
    case 'both':
      return { ...base, top: [feed('supply')], bottom: [feed('intake')] }
    case 'bleed-top':
      // The bleed is taken as ideal: the top port sees the set fraction of boost, as in the static level.
      return { ...base, bleedFraction: c.fraction, top: [feed('bleed')], bottom: [c.bottomOnBoost ? feed('intake') : vent] }
    case 'solenoid-3port': {
      const sol = cd * circleArea(c.solenoidDiameterM)
      const restrictor = cd * circleArea(c.restrictorDiameterM)
      if (c.chamber === 'bottom') {
        // Boost feeds the bottom chamber through the restrictor; the solenoid vents it as duty rises.
        return { ...base, fixedDuty: c.duty, top: [vent], bottom: [feed('intake', restrictor), feed('ambient', sol, true)] }
      }
      // The solenoid feeds the top chamber from the supply; the restrictor bleeds it to the air.
      return { ...base, fixedDuty: c.duty, top: [feed('supply', sol, true), feed('ambient', restrictor)], bottom: [vent] }
    }
    case 'solenoid-4port': {
      const sol = cd * circleArea(c.solenoidDiameterM)
      const restrictor = cd * circleArea(c.restrictorDiameterM)
      return {
        ...base,
        fixedDuty: c.duty,
        top: [feed('supply', sol, true), feed('ambient', restrictor)],
        bottom: [feed('intake', restrictor), feed('ambient', sol, true)],
      }
    }
    case 'closed-loop': {
      const sol = cd * circleArea(c.solenoidDiameterM)
      const restrictor = cd * circleArea(c.restrictorDiameterM)
      return { ...base, closedLoop: true, top: [feed('supply', sol, true), feed('ambient', restrictor)], bottom: [vent] }
    }
  }
}
