import { boostAtLift, dutyToCrackAt, staticChambers, type WindowConditions } from '../balance.ts'
import { wastegateAreas } from '../geometry.ts'
import type { Scenario } from '../scenario.ts'
import { formatQuantity } from '../units.ts'
import type { PullMetrics, PullSeries } from './pull-result.ts'

/**
 * What a tuner should read in a pull's numbers, in words (MODEL.md §4b): late cracks the plumbing causes, targets
 * a closed loop cannot hold, overshoot past a target, boost that hunts and creep with the gate wide open. Each note says what was
 * seen and what usually causes it; none changes a number.
 */

const PSI = 6894.757 // Pa per psi (NIST SP 811)
/** A pull that cracks this far above the static crack because of its plumbing is said to lag (MODEL.md §4b). */
export const PORT_LAG_NOTE_PA = 0.3 * PSI
/** A closed loop that peaks this far over its target is said to overshoot (common practice, no source). */
export const OVERSHOOT_NOTE_PA = 1 * PSI
/** Boost rising this much with the gate on its full-lift stop is creep worth a note (common practice, no source). */
export const CREEP_NOTE_PA = 0.5 * PSI

/** A pressure in both unit systems: notes are text, read by users of either. */
const psi = (pa: number) => `${formatQuantity('pressure', 'us', pa, 1)} (${formatQuantity('pressure', 'metric', pa, 0)})`

/**
 * How far the chambers trail their steady divider pressures at sample i, as boost: the force of each chamber's lag
 * over what a unit of boost does through the drive pressure on the valve face.
 */
export function chamberLagAsBoostPa(s: Scenario, series: PullSeries, i: number): number {
  const boost = series.boostPa[i]!
  const steady = staticChambers(s, { duty: series.duty[i]!, suppliedPa: series.regulatedPa[i]! }).at(boost)
  const a = wastegateAreas(s.wastegate)
  const lagForce = (series.topPa[i]! - steady.topPa) * a.topM2 - (series.bottomPa[i]! - steady.bottomPa) * a.bottomM2
  const ratio = boost > 0 ? Math.max((series.drivePa[i]! - s.exhaust.driveAtZeroBoostPa) / boost, 0.5) : s.exhaust.ratio
  return lagForce / (ratio * a.valveM2)
}

/** A pull's notes, and the findings among them a sweep keeps as flags. */
export interface PullFindings {
  notes: string[]
  portLag: boolean
  targetUnreachable: boolean
}

export function pullNotes(s: Scenario, series: PullSeries, m: PullMetrics): PullFindings {
  const notes: string[] = []
  let portLag = false
  let targetUnreachable = false
  if (m.crackBoostPa !== null && m.crackTimeS !== null) {
    // The static crack under what the pull held at its crack (the duty, what the regulator delivered, the ratio).
    const i = series.timeS.findIndex((t) => t >= m.crackTimeS!)
    const boost = i >= 0 ? series.boostPa[i]! : 0
    if (i >= 0 && boost > 0) {
      const held: WindowConditions = {
        duty: series.duty[i]!,
        ratio: Math.max((series.drivePa[i]! - s.exhaust.driveAtZeroBoostPa) / boost, 0),
      }
      if (s.supply.kind !== 'boost') held.suppliedPa = series.regulatedPa[i]!
      const crack = boostAtLift(s, 0, held)
      const lag = chamberLagAsBoostPa(s, series, i)
      const late = crack.status === 'opens' ? m.crackBoostPa - crack.boostPa : 0
      // Only where the chambers' lag accounts for most of the late crack (the rest is the valve's own motion).
      if (late > PORT_LAG_NOTE_PA && lag > PORT_LAG_NOTE_PA && lag > 0.5 * late) {
        portLag = true
        notes.push(
          `Port lag: the gate cracked at ${psi(m.crackBoostPa)}, ${psi(late)} above the static ` +
            `crack, because the actuator's chambers trailed their ports by about ${psi(lag)} of boost. Small hose bores, ` +
            `long lines, restrictors or a small solenoid slow them; larger plumbing brings the crack and the peak down.`,
        )
      }
    }
  }
  const c = s.control
  if (c.kind === 'closed-loop') {
    const targets = c.targetByRpm?.map((p) => p.boostPa) ?? [c.targetBoostPa]
    const lowest = Math.min(...targets)
    const highest = Math.max(...targets)
    const crackAt = (duty: number) => {
      const o = boostAtLift(s, 0, { duty })
      return o.status === 'opens' ? o.boostPa : o.status === 'open-at-zero-boost' ? 0 : Number.POSITIVE_INFINITY
    }
    const ends = [crackAt(c.dutyMin), crackAt(c.dutyMax)]
    const floor = Math.min(...ends)
    const ceiling = Math.max(...ends)
    const unreachable = lowest < floor - 0.1 * PSI || highest > ceiling + 0.1 * PSI
    targetUnreachable = unreachable
    if (lowest < floor - 0.1 * PSI) {
      notes.push(
        `The boost target of ${psi(lowest)} is below the ${psi(floor)} the gate holds at either duty limit: the loop ` +
          `cannot hold it, and boost sits near ${psi(floor)}. A softer spring or a wider duty range reaches it.`,
      )
    }
    if (highest > ceiling + 0.1 * PSI) {
      notes.push(
        `The boost target of ${psi(highest)} is above the ${Number.isFinite(ceiling) ? psi(ceiling) : 'boost'} the ` +
          `gate cracks at with the solenoid at its limit: the supply or the duty range cannot reach it.`,
      )
    }
    const target = dutyToCrackAt(s, c.targetBoostPa)
    if (!unreachable && target !== null && c.targetByRpm === undefined && m.peakBoostPa - c.targetBoostPa > OVERSHOOT_NOTE_PA) {
      notes.push(
        `Boost peaked ${psi(m.peakBoostPa - c.targetBoostPa)} over the ${psi(c.targetBoostPa)} target: the gate cracked ` +
          `late on the spool. A highest duty nearer the base duty (${(target * 100).toFixed(0)} %), a derivative, or ` +
          `for a top chamber on a supply a setpoint nearer what the target needs, brings the peak down.`,
      )
    }
  }
  if (m.huntingHz !== null && m.boostSwingPa !== null) {
    notes.push(
      `Boost hunts: it swings ${psi(m.boostSwingPa)} peak to peak, about ${m.huntingHz.toFixed(1)} times a second, ` +
        `after the crack. The gate and its chambers keep answering each other late: larger port plumbing, a stiffer ` +
        `spring, or in closed loop gentler gains usually calm it. A model of the valve's mean motion; a real gate's ` +
        `friction may hide a small swing or its own chatter add to it.`,
    )
  }
  if (m.creepPa !== null && m.creepPa > CREEP_NOTE_PA) {
    notes.push(
      `Creep: boost rose ${psi(m.creepPa)} with the gate on its full-lift stop. The gate cannot pass enough exhaust at ` +
        `this drive pressure; a larger valve, more lift or a larger turbine housing holds boost flat.`,
    )
  }
  return { notes, portLag, targetUnreachable }
}
