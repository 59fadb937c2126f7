import { circleArea } from '../geometry.ts'
import type { PortLine, Scenario } from '../scenario.ts'

/**
 * What each actuator chamber of one gate is connected to, per port arrangement (MODEL.md §4 Control, §4b
 * Plumbing), as flow paths: a path leads from a source (boost, the air, the regulator, a bleed of boost) through
 * every restriction on its way — the port fitting, the hose, a restrictor pill, a solenoid's orifice — each taken
 * as an orifice in series with the others. Both levels read the same paths: the pull integrates the chambers
 * through them, and the static level solves the same steady balance (steady-chamber.ts).
 *
 * Solenoids are switching valves: a path with `share` 'on' is open for the duty's share of each cycle, one with
 * 'off' for the rest. Their time-averaged flow is the path's flow times its share (the valve cycles far faster
 * than a chamber fills).
 */

/** Where a path leads: the intake manifold, the air, the supply's regulated outlet, or a bleed of boost. */
export type SourceKind = 'intake' | 'ambient' | 'supply' | 'bleed'

/** When a path is open: always, for the solenoid's duty share, or for the rest of the cycle. */
export type DutyShare = 'always' | 'on' | 'off'

export interface Connection {
  source: SourceKind
  /** C_d·A of the whole path, m² (open). */
  dischargeAreaM2: number
  share: DutyShare
}

export interface ChamberPorts {
  connections: Connection[]
  /** Hose volume joined to the chamber, m³ (zero when the port only vents through its fitting). */
  lineVolumeM3: number
}

export interface Plumbing {
  top: ChamberPorts
  bottom: ChamberPorts
  /** Fraction of boost a bleed sends to the top chamber (bleed-top only). */
  bleedFraction: number
  /** Fixed duty of a solenoid (3- and 4-port), or null when there is none or it is in closed loop. */
  fixedDuty: number | null
  closedLoop: boolean
}

/**
 * Darcy friction factor of a hose, for its loss K = f·L/d: 0.03, turbulent flow in a smooth tube of a few
 * millimetres (Moody chart; common practice for such estimates, no source).
 */
export const HOSE_FRICTION_FACTOR = 0.03

/** C_d·A of orifices in series: 1/(C_d·A)² = Σ 1/(C_d·A)ᵢ² (equal mass flow, the pressure drops add). */
export function seriesDischargeAreaM2(areasM2: readonly number[]): number {
  let sum = 0
  for (const a of areasM2) {
    if (!(a > 0)) return 0
    if (Number.isFinite(a)) sum += 1 / (a * a)
  }
  return sum === 0 ? Infinity : 1 / Math.sqrt(sum)
}

/**
 * A hose as an orifice: its loss K = f·L/d passes ṁ = A·√(2ρΔp/K), the flow of an orifice of C_d·A = A/√K.
 * A hose of no length adds nothing.
 */
export function hoseDischargeAreaM2(line: PortLine): number {
  const k = (HOSE_FRICTION_FACTOR * line.lengthM) / line.boreM
  return k > 0 ? circleArea(line.boreM) / Math.sqrt(k) : Infinity
}

export function chamberPlumbing(s: Scenario): Plumbing {
  const w = s.wastegate
  const cd = w.portDischargeCoefficient
  const fitting = cd * circleArea(w.portDiameterM)
  const lineOf = (name: 'top' | 'bottom') => {
    const line = s.plumbing[name]
    const areas = [fitting, hoseDischargeAreaM2(line)]
    if (line.restrictorDiameterM !== undefined) areas.push(cd * circleArea(line.restrictorDiameterM))
    return { areas, volumeM3: circleArea(line.boreM) * line.lengthM }
  }
  /** A port joined by its hose to a source, through a solenoid's orifice when there is one. */
  const piped = (name: 'top' | 'bottom', paths: { source: SourceKind; share: DutyShare }[], solenoidM2?: number): ChamberPorts => {
    const line = lineOf(name)
    const area = seriesDischargeAreaM2(solenoidM2 === undefined ? line.areas : [...line.areas, solenoidM2])
    return { connections: paths.map((p) => ({ ...p, dischargeAreaM2: area })), lineVolumeM3: line.volumeM3 }
  }
  const open: ChamberPorts = { connections: [{ source: 'ambient', dischargeAreaM2: fitting, share: 'always' }], lineVolumeM3: 0 }
  const from = (name: 'top' | 'bottom', source: SourceKind) => piped(name, [{ source, share: 'always' }])
  const c = s.control
  const base = { bleedFraction: 0, fixedDuty: null, closedLoop: false }
  switch (c.kind) {
    case 'none':
      return { ...base, top: open, bottom: open }
    case 'bottom-boost':
      return { ...base, top: open, bottom: from('bottom', 'intake') }
    case 'top-supply':
      return { ...base, top: from('top', 'supply'), bottom: open }
    case 'both':
      return { ...base, top: from('top', 'supply'), bottom: from('bottom', 'intake') }
    case 'bleed-top':
      // The bleed is taken as ideal: the top port sees the set fraction of boost, as in the static level.
      return { ...base, bleedFraction: c.fraction, top: from('top', 'bleed'), bottom: c.bottomOnBoost ? from('bottom', 'intake') : open }
    case 'solenoid-3port': {
      const sol = cd * circleArea(c.solenoidDiameterM)
      if (c.chamber === 'bottom') {
        // Duty vents the bottom chamber; the rest of the cycle boost fills it.
        const bottom = piped('bottom', [{ source: 'intake', share: 'off' }, { source: 'ambient', share: 'on' }], sol)
        return { ...base, fixedDuty: c.duty, top: open, bottom }
      }
      const top = piped('top', [{ source: 'supply', share: 'on' }, { source: 'ambient', share: 'off' }], sol)
      return { ...base, fixedDuty: c.duty, top, bottom: open }
    }
    case 'solenoid-4port': {
      const sol = cd * circleArea(c.solenoidDiameterM)
      return {
        ...base,
        fixedDuty: c.duty,
        top: piped('top', [{ source: 'supply', share: 'on' }, { source: 'ambient', share: 'off' }], sol),
        bottom: piped('bottom', [{ source: 'intake', share: 'off' }, { source: 'ambient', share: 'on' }], sol),
      }
    }
    case 'closed-loop': {
      const sol = cd * circleArea(c.solenoidDiameterM)
      const top = piped('top', [{ source: 'supply', share: 'on' }, { source: 'ambient', share: 'off' }], sol)
      return { ...base, closedLoop: true, top, bottom: open }
    }
  }
}

/**
 * Which ports an arrangement joins by a hose to a source (the rest vent through their fitting alone), from the
 * arrangement's kind and switches only, so a form can ask while its numbers are still being typed. The same answer
 * as chamberPlumbing's: a port is piped exactly where its lineVolumeM3 is above zero (test/pull/plumbing.test.ts).
 */
export function pipedPorts(control: { kind: string; chamber?: 'top' | 'bottom'; bottomOnBoost?: boolean }): { top: boolean; bottom: boolean } {
  switch (control.kind) {
    case 'bottom-boost':
      return { top: false, bottom: true }
    case 'top-supply':
    case 'closed-loop':
      return { top: true, bottom: false }
    case 'both':
    case 'solenoid-4port':
      return { top: true, bottom: true }
    case 'bleed-top':
      return { top: true, bottom: control.bottomOnBoost !== false }
    case 'solenoid-3port':
      return { top: control.chamber === 'top', bottom: control.chamber !== 'top' }
    default:
      return { top: false, bottom: false }
  }
}

/** The open area of a path at a duty. */
export function openAreaM2(c: Connection, duty: number): number {
  return c.share === 'always' ? c.dischargeAreaM2 : c.share === 'on' ? c.dischargeAreaM2 * duty : c.dischargeAreaM2 * (1 - duty)
}
