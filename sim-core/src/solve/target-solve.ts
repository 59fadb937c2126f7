import { boostAtLift, regulatedSupply, springForceAtBoost, type BoostOutcome } from '../balance.ts'
import { bracketedRoot } from '../bracketed-root.ts'
import { springTotals, wastegateAreas } from '../geometry.ts'
import { runPull } from '../pull/run-pull.ts'
import { SOLVE_TARGETS, SOLVE_UNKNOWNS, type Scenario } from '../scenario.ts'

/**
 * The inverse of the static balance and of a pull (MODEL.md §4b, target solve): the one value of a scenario that
 * makes the boost a shop asks for. Every unknown here raises boost as it rises (a stiffer spring, more pressure or
 * more bleed on the top chamber, more solenoid duty), so the answer is the root of boost(u) − target on the
 * unknown's range, found by a bracketed root (Illinois). For the seat force at one ratio it is closed form: the
 * pressure forces of MODEL.md §2 at the target boost, which the spring must just balance.
 *
 * What nobody knows is the drive-to-boost ratio: over a band of ratios the solve returns the value whose worst case
 * is closest to the target. Boost falls as the ratio rises, so the lowest ratio gives the highest boost and the
 * worst case is best when the two ends miss by as much on either side: boost(u, r_low) + boost(u, r_high) = 2·target.
 *
 * A target the unknown cannot reach is a result, never a number: it says which end of the range stops it and the
 * nearest value with the boost that gives.
 */

export { SOLVE_TARGETS, SOLVE_UNKNOWNS }
export type SolveUnknown = (typeof SOLVE_UNKNOWNS)[number]
export type SolveTarget = (typeof SOLVE_TARGETS)[number]

export interface SolveRequest {
  unknown: SolveUnknown
  /** Which boost the target is: the static crack, the static full-open boost, or a pull's settled boost. */
  target: SolveTarget
  /** Gauge, Pa. */
  targetBoostPa: number
  /** Drive-to-boost ratios the answer must hold over, low then high; the scenario's own ratio when left out. */
  ratioBand?: readonly [number, number]
}

/** The boost the answer gives at one end of the ratio band; null where the valve never opens (or never settles). */
export interface BandBoost {
  ratio: number
  boostPa: number | null
  /** Settled-boost targets: whether that pull settled (not hunting, not still moving); null for a static target. */
  settles: boolean | null
}

interface Common {
  unknown: SolveUnknown
  target: SolveTarget
  targetBoostPa: number
  /** Pulls run (settled-boost targets only). */
  pulls: number
}

export type SolveResult =
  | (Common & {
      status: 'solved'
      /** SI: N for the seat force, Pa gauge for the setpoint, a fraction 0–1 for the bleed and the duty. */
      value: number
      /** Seat force only: the bench crack pressure that means in this gate (value over A_p − A_s). */
      benchCrackPressurePa: number | null
      /** The boost at each end of the band (one entry without a band). */
      band: BandBoost[]
      /** The larger miss of the band's ends from the target. */
      worstMissPa: number
      /** The scenario with the answer put in. */
      scenario: Scenario
    })
  | (Common & {
      status: 'unreachable'
      /**
       * below-range: the unknown's lowest value already gives more boost; above-range: its highest gives less;
       * no-settled-boost: the pulls near the answer do not settle (boost hunts, or a pull stops early).
       */
      reason: 'below-range' | 'above-range' | 'no-settled-boost'
      message: string
      nearest: { value: number; band: BandBoost[] }
    })

/** The most seat force, setpoint and target boost the schema takes (scenario.ts: springs, regulator, closed loop). */
const SEAT_FORCE_MAX_N = 5000
const SETPOINT_MAX_PA = 2_000_000
export const TARGET_BOOST_MAX_PA = 1_000_000
/** Boost standing in for "never opens" in the root search: the static solver's own search limit, about 290 psi. */
const NEVER_OPENS_PA = 2_000_000
/** A settled-boost solve stops when the band's mean is this close to the target (a quarter of the round trip's 0.1 psi). */
const SETTLED_TOLERANCE_PA = 0.025 * 6894.757
/** Pulls a settled-boost solve may run before it reports the best it found. */
const MAX_SOLVE_PULLS = 24

const PSI = 6894.757

/** Where the unknown lives in the scenario, its range there, and the scenario with a value put in. */
interface UnknownSlot {
  lo: number
  hi: number
  put(value: number): Scenario
  /** Why the lowest value already gives too much boost, and why the highest gives too little. */
  tooLow: string
  tooHigh: string
}

function slotFor(s: Scenario, unknown: SolveUnknown): UnknownSlot {
  const c = s.control
  switch (unknown) {
    case 'seat-force': {
      const { rateNPerM } = springTotals(s.springs, wastegateAreas(s.wastegate))
      return {
        lo: 0,
        hi: SEAT_FORCE_MAX_N,
        // Nested springs act in parallel: the answer is their total, put in as one spring of their total rate.
        put: (seatForceN) => ({ ...s, springs: [{ from: 'seat', seatForceN, rateNPerM }] }),
        tooLow: 'the target is below what the ports and drive pressure hold the valve shut to with no spring at all',
        tooHigh: `the target needs more than ${SEAT_FORCE_MAX_N} N of seat force`,
      }
    }
    case 'setpoint': {
      const supply = s.supply
      const usesSupply = c.kind === 'top-supply' || c.kind === 'both' || c.kind === 'solenoid-4port' || c.kind === 'closed-loop' ||
        (c.kind === 'solenoid-3port' && c.chamber === 'top')
      if (supply.kind === 'boost') throw new RangeError('supply.kind must be a CO₂ bottle or a compressor to solve for a regulator setpoint')
      if (!usesSupply) throw new RangeError(`control.kind "${c.kind}" does not feed a chamber from the regulated supply, so its setpoint moves nothing`)
      // A regulator delivers at most its source less its droop (balance.ts): that is the highest setpoint that counts.
      const regulated = regulatedSupply(s)
      const source = regulated?.sourcePa ?? null
      const hi = Math.min(SETPOINT_MAX_PA, source === null ? SETPOINT_MAX_PA : Math.max(0, source - supply.regulatorDroopPa))
      return {
        lo: 0,
        hi,
        put: (regulatorSetpointPa) => ({ ...s, supply: { ...supply, regulatorSetpointPa } }),
        tooLow: 'the target is below what the spring alone holds',
        tooHigh: `the target needs more than the supply delivers (${(hi / PSI).toFixed(1)} psi, its source less the regulator's droop)`,
      }
    }
    case 'bleed-fraction': {
      if (c.kind !== 'bleed-top') throw new RangeError(`control.kind must be "bleed-top" to solve for a bleed fraction, not "${c.kind}"`)
      return {
        lo: 0,
        hi: 1,
        put: (fraction) => ({ ...s, control: { ...c, fraction } }),
        tooLow: 'the target is below what the spring holds with no bleed',
        tooHigh: 'the target needs more than all of boost on the top chamber',
      }
    }
    case 'duty': {
      if (c.kind !== 'solenoid-3port' && c.kind !== 'solenoid-4port') {
        throw new RangeError(
          `control.kind must be a three- or four-port solenoid to solve for its duty, not "${c.kind}"` +
            (c.kind === 'closed-loop' ? ' (a closed loop finds its own duty about its target)' : ''),
        )
      }
      return {
        lo: 0,
        hi: 1,
        put: (duty) => ({ ...s, control: { ...c, duty } }),
        tooLow: 'the target is below what the gate holds with the solenoid at 0 % duty',
        tooHigh: 'the target is above what the gate holds with the solenoid at 100 % duty',
      }
    }
  }
}

/** The unknowns the scenario's arrangement has a place for (a setpoint needs a regulated supply on a port, a duty a solenoid). */
export function unknownsFor(s: Scenario): SolveUnknown[] {
  return SOLVE_UNKNOWNS.filter((unknown) => {
    try {
      slotFor(s, unknown)
      return true
    } catch {
      return false
    }
  })
}

/** The static boost of an outcome, with "never opens" as a boost too high to matter and "open at zero" as ≤ 0. */
const boostOf = (o: BoostOutcome): number => (o.status === 'never-opens' ? NEVER_OPENS_PA : o.boostPa)

function staticBoost(s: Scenario, target: 'crack' | 'full-open', ratio: number): number {
  return boostOf(boostAtLift(s, target === 'crack' ? 0 : s.wastegate.maxLiftM, { ratio }))
}

const withRatio = (s: Scenario, ratio: number): Scenario => ({ ...s, exhaust: { ...s.exhaust, ratio, ratioByRpm: undefined } })

/**
 * A pull's settled boost, or its peak where the gate never opened (boost then goes only as high as the turbo makes
 * it), and whether it settled; null boost when the pull stopped early or left no window.
 */
function settledBoost(s: Scenario): { boostPa: number | null; settles: boolean } {
  const r = runPull(s)
  const settles = !r.flags.notSettled && !r.flags.hunting
  if (r.stats.outcome !== 'converged') return { boostPa: null, settles: false }
  return { boostPa: r.metrics.settledBoostPa ?? (r.flags.neverOpened ? r.metrics.peakBoostPa : null), settles }
}

/**
 * The value of `request.unknown` that gives `request.targetBoostPa` of `request.target` boost, over the ratio band.
 * Throws a RangeError naming the scenario field when the unknown has no place in the scenario's arrangement.
 */
export function solveForTarget(s: Scenario, request: SolveRequest): SolveResult {
  const { unknown, target, targetBoostPa } = request
  if (!(Number.isFinite(targetBoostPa) && targetBoostPa > 0 && targetBoostPa <= TARGET_BOOST_MAX_PA)) {
    throw new RangeError(`target boost must be a number above 0 and at most ${TARGET_BOOST_MAX_PA} Pa (145 psi), not ${targetBoostPa}`)
  }
  const band = request.ratioBand ?? [s.exhaust.ratio, s.exhaust.ratio]
  if (!(band[0] > 0 && band[1] >= band[0])) throw new RangeError(`ratio band must run from a ratio above 0 up to one at least as high, not ${band[0]}–${band[1]}`)
  const ratios = band[0] === band[1] ? [band[0]] : [band[0], band[1]]
  const slot = slotFor(s, unknown)
  const common = { unknown, target, targetBoostPa }

  if (target !== 'settled') {
    const boosts = (u: number) => ratios.map((r) => staticBoost(slot.put(u), target, r))
    const mean = (u: number) => boosts(u).reduce((a, b) => a + b, 0) / ratios.length
    const report = (u: number): BandBoost[] =>
      boosts(u).map((b, i) => ({ ratio: ratios[i]!, boostPa: b >= NEVER_OPENS_PA ? null : b, settles: null }))
    let value: number
    if (unknown === 'seat-force' && ratios.length === 1) {
      // Closed form: the spring that balances the pressure forces at the target boost (MODEL.md §2 solved for it).
      value = seatForceFor(s, target, ratios[0]!, targetBoostPa)
    } else {
      const fLo = mean(slot.lo) - targetBoostPa
      const fHi = mean(slot.hi) - targetBoostPa
      if (fLo > 0 || fHi < 0) {
        const end = fLo > 0 ? slot.lo : slot.hi
        return unreachable(common, fLo > 0 ? 'below-range' : 'above-range', fLo > 0 ? slot.tooLow : slot.tooHigh, end, report(end), 0)
      }
      value = bracketedRoot((u) => mean(u) - targetBoostPa, slot.lo, slot.hi, fLo, fHi, 1e-13, 200)
    }
    if (value < slot.lo || value > slot.hi) {
      const end = value < slot.lo ? slot.lo : slot.hi
      return unreachable(common, value < slot.lo ? 'below-range' : 'above-range', value < slot.lo ? slot.tooLow : slot.tooHigh, end, report(end), 0)
    }
    return solved(s, common, value, report(value), slot, 0)
  }

  // Settled boost of a pull: a few pulls of a bracketed root, started from the static answers. A settled gate sits
  // between its seat and full lift, so its boost lies between the static crack and full-open boost: the value that
  // cracks at the target gives a settled boost at or above it, the one that opens fully at the target one at or
  // below it, and the two bracket the answer unless the pull lags or creeps past them (then the walk widens it).
  let pulls = 0
  const settledAt = (u: number): BandBoost[] => {
    const put = slot.put(u)
    return ratios.map((ratio) => {
      pulls++
      return { ratio, ...settledBoost(ratios.length === 1 && ratio === s.exhaust.ratio ? put : withRatio(put, ratio)) }
    })
  }
  const missOf = (b: BandBoost[]): number | null =>
    b.some((x) => x.boostPa === null) ? null : b.reduce((a, x) => a + x.boostPa!, 0) / b.length - targetBoostPa
  interface Probe {
    u: number
    b: BandBoost[]
    f: number
  }
  const probe = (u: number): Probe | SolveResult => {
    const b = settledAt(u)
    const f = missOf(b)
    return f === null ? noSettledBoost(common, u, b, pulls) : { u, b, f }
  }
  const isProbe = (p: Probe | SolveResult): p is Probe => 'f' in p
  const startAt = (t: 'crack' | 'full-open') => {
    const r = solveForTarget(s, { ...request, target: t })
    return r.status === 'solved' ? r.value : r.nearest.value
  }
  const atCrack = probe(startAt('crack'))
  if (!isProbe(atCrack)) return atCrack
  if (Math.abs(atCrack.f) <= SETTLED_TOLERANCE_PA) return solved(s, common, atCrack.u, atCrack.b, slot, pulls)
  const atFull = probe(startAt('full-open'))
  if (!isProbe(atFull)) return atFull
  let lo = atCrack.f <= 0 ? atCrack : atFull
  let hi = atCrack.f <= 0 ? atFull : atCrack
  // Widen until lo.f ≤ 0 ≤ hi.f (boost rises with the unknown), or an end of the range says the target is out of reach.
  let step = Math.max(Math.abs(atCrack.u - atFull.u), 0.01 * (slot.hi - slot.lo))
  while (lo.f > 0 || hi.f < 0) {
    if (pulls >= MAX_SOLVE_PULLS) return noSettledBoost(common, (lo.f > 0 ? lo : hi).u, (lo.f > 0 ? lo : hi).b, pulls)
    if (lo.f > 0) {
      if (lo.u <= slot.lo) return unreachable(common, 'below-range', slot.tooLow, lo.u, lo.b, pulls)
      const next = probe(Math.max(slot.lo, Math.min(lo.u, hi.u) - step))
      if (!isProbe(next)) return next
      hi = lo
      lo = next
    } else {
      if (hi.u >= slot.hi) return unreachable(common, 'above-range', slot.tooHigh, hi.u, hi.b, pulls)
      const next = probe(Math.min(slot.hi, Math.max(lo.u, hi.u) + step))
      if (!isProbe(next)) return next
      lo = hi
      hi = next
    }
    step *= 2
  }
  // Illinois on [lo, hi], a pull per ratio each step.
  let side = 0
  let fLo = lo.f
  let fHi = hi.f
  let best = Math.abs(lo.f) < Math.abs(hi.f) ? lo : hi
  while (Math.abs(best.f) > SETTLED_TOLERANCE_PA && pulls < MAX_SOLVE_PULLS) {
    const u = fHi === fLo ? 0.5 * (lo.u + hi.u) : (lo.u * fHi - hi.u * fLo) / (fHi - fLo)
    const p = probe(u)
    if (!isProbe(p)) return p
    if (Math.abs(p.f) < Math.abs(best.f)) best = p
    if (p.f < 0) {
      lo = p
      fLo = p.f
      if (side === 1) fHi *= 0.5
      side = 1
    } else {
      hi = p
      fHi = p.f
      if (side === -1) fLo *= 0.5
      side = -1
    }
  }
  if (Math.abs(best.f) > SETTLED_TOLERANCE_PA) return noSettledBoost(common, best.u, best.b, pulls)
  return solved(s, common, best.u, best.b, slot, pulls)
}

function seatForceFor(s: Scenario, target: 'crack' | 'full-open', ratio: number, boostPa: number): number {
  // MODEL.md §2 solved for the spring: the pressure forces at the target boost, less k·x_max at full lift.
  const rate = springTotals(s.springs, wastegateAreas(s.wastegate)).rateNPerM
  return springForceAtBoost(s, boostPa, target === 'full-open', ratio) - (target === 'full-open' ? rate * s.wastegate.maxLiftM : 0)
}

function solved(
  s: Scenario,
  common: { unknown: SolveUnknown; target: SolveTarget; targetBoostPa: number },
  value: number,
  band: BandBoost[],
  slot: UnknownSlot,
  pulls: number,
): SolveResult {
  const misses = band.map((b) => (b.boostPa === null ? Number.POSITIVE_INFINITY : Math.abs(b.boostPa - common.targetBoostPa)))
  return {
    ...common,
    status: 'solved',
    value,
    benchCrackPressurePa: common.unknown === 'seat-force' ? value / wastegateAreas(s.wastegate).bottomM2 : null,
    band,
    worstMissPa: Math.max(...misses),
    pulls,
    scenario: slot.put(value),
  }
}

function unreachable(
  common: { unknown: SolveUnknown; target: SolveTarget; targetBoostPa: number },
  reason: 'below-range' | 'above-range',
  message: string,
  value: number,
  band: BandBoost[],
  pulls: number,
): SolveResult {
  return { ...common, status: 'unreachable', reason, message, nearest: { value, band }, pulls }
}

function noSettledBoost(
  common: { unknown: SolveUnknown; target: SolveTarget; targetBoostPa: number },
  value: number,
  band: BandBoost[],
  pulls: number,
): SolveResult {
  return {
    ...common,
    status: 'unreachable',
    reason: 'no-settled-boost',
    message: 'the pulls near the answer do not settle to the target (boost hunts, or a pull stops early); the nearest pull is given',
    nearest: { value, band },
    pulls,
  }
}
