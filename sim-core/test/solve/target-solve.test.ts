import { describe, expect, it } from 'vitest'
import {
  computeBalance,
  defaultScenario,
  fromSI,
  parseScenario,
  runPull,
  solveForTarget,
  toSI,
  units,
  type BoostOutcome,
  type Scenario,
  type SolveResult,
  type SolveUnknown,
} from '../../src/index.ts'
import { FAMILIES, randomScenarios } from '../pull/random-scenario.ts'

/**
 * The target solve (MODEL.md §4b): the seat force, setpoint, bleed fraction or duty that gives a boost. Checked
 * against closed forms derived here by hand from the force balance of MODEL.md §2,
 *   F_net = p_em·A_v + p_bot·(A_p − A_s) − F − p_top·A_p − p_dn·(A_v − A_s) = 0,
 * with p_em = r·b + p_em0 and each chamber as its arrangement feeds it (vented downstream, so p_dn = 0), against
 * the trade's worked example, and by round trips through the balance and the pull.
 */

const psi = (v: number) => toSI(units.psi, v)
const toPsi = (pa: number) => fromSI(units.psi, pa)
const circle = (d: number) => (Math.PI * d * d) / 4

function scenario(patch: Record<string, unknown>): Scenario {
  const parsed = parseScenario({ ...defaultScenario(), ...patch })
  if (!parsed.ok) throw new Error(`test scenario is not valid: ${JSON.stringify(parsed.issues)}`)
  return parsed.scenario
}

function solvedValue(r: SolveResult): number {
  if (r.status !== 'solved') throw new Error(`expected a solution, got ${r.reason}: ${r.message}`)
  return r.value
}

const boostOf = (o: BoostOutcome) => {
  if (o.status !== 'opens') throw new Error(`the valve ${o.status}`)
  return o.boostPa
}

describe('target solve against closed forms of the force balance (MODEL.md §2)', () => {
  const base = defaultScenario()
  const w = base.wastegate
  // Areas from the gate's diameters, by hand: valve face, shaft, actuator.
  const Av = circle(w.valveDiameterM)
  const As = circle(w.shaftDiameterM)
  const Ap = circle(w.actuatorDiameterM)
  const r = base.exhaust.ratio
  const b = psi(14)
  const s = psi(8)
  const co2 = { kind: 'co2', regulatorSetpointPa: s }

  it('nothing connected: F0 = b·r·A_v, and with drive at zero boost p0, F0 = (r·b + p0)·A_v', () => {
    const none = scenario({ control: { kind: 'none' } })
    expect(solvedValue(solveForTarget(none, { unknown: 'seat-force', target: 'crack', targetBoostPa: b }))).toBeCloseTo(b * r * Av, 6)
    const p0 = psi(1.5)
    const withZero = { ...none, exhaust: { ...none.exhaust, driveAtZeroBoostPa: p0 } }
    expect(solvedValue(solveForTarget(withZero, { unknown: 'seat-force', target: 'crack', targetBoostPa: b }))).toBeCloseTo((r * b + p0) * Av, 6)
  })

  it('bottom port on boost: F0 = b·(r·A_v + A_p − A_s); at full lift F0 + k·x_max is that', () => {
    const bottom = scenario({ control: { kind: 'bottom-boost' } })
    const k = bottom.springs.reduce((sum, sp) => sum + sp.rateNPerM, 0)
    expect(solvedValue(solveForTarget(bottom, { unknown: 'seat-force', target: 'crack', targetBoostPa: b }))).toBeCloseTo(b * (r * Av + Ap - As), 6)
    expect(solvedValue(solveForTarget(bottom, { unknown: 'seat-force', target: 'full-open', targetBoostPa: b }))).toBeCloseTo(
      b * (r * Av + Ap - As) - k * w.maxLiftM,
      6,
    )
  })

  it('top port on a regulated supply s: F0 = b·r·A_v − s·A_p, and s = (b·r·A_v − F0)/A_p', () => {
    const top = scenario({ control: { kind: 'top-supply' }, supply: co2 })
    expect(solvedValue(solveForTarget(top, { unknown: 'seat-force', target: 'crack', targetBoostPa: b }))).toBeCloseTo(b * r * Av - s * Ap, 6)
    const F0 = 150
    const withSpring = { ...top, springs: [{ from: 'seat' as const, seatForceN: F0, rateNPerM: 10_000 }] }
    expect(solvedValue(solveForTarget(withSpring, { unknown: 'setpoint', target: 'crack', targetBoostPa: psi(30) }))).toBeCloseTo(
      (psi(30) * r * Av - F0) / Ap,
      4,
    )
  })

  it('both ports: F0 = b·(r·A_v + A_p − A_s) − s·A_p, and s = (b·(r·A_v + A_p − A_s) − F0)/A_p', () => {
    const both = scenario({ control: { kind: 'both' }, supply: co2 })
    expect(solvedValue(solveForTarget(both, { unknown: 'seat-force', target: 'crack', targetBoostPa: b }))).toBeCloseTo(
      b * (r * Av + Ap - As) - s * Ap,
      6,
    )
    const F0 = 200
    const withSpring = { ...both, springs: [{ from: 'seat' as const, seatForceN: F0, rateNPerM: 10_000 }] }
    expect(solvedValue(solveForTarget(withSpring, { unknown: 'setpoint', target: 'crack', targetBoostPa: b }))).toBeCloseTo(
      (b * (r * Av + Ap - As) - F0) / Ap,
      4,
    )
  })

  it('a bleed of boost to the top: F0 = b·(r·A_v + A_p − A_s − f·A_p), and f = (b·(r·A_v + A_p − A_s) − F0)/(b·A_p)', () => {
    const f = 0.3
    const bleed = scenario({ control: { kind: 'bleed-top', fraction: f } })
    expect(solvedValue(solveForTarget(bleed, { unknown: 'seat-force', target: 'crack', targetBoostPa: b }))).toBeCloseTo(
      b * (r * Av + Ap - As - f * Ap),
      6,
    )
    const F0 = 250
    const withSpring = { ...bleed, springs: [{ from: 'seat' as const, seatForceN: F0, rateNPerM: 10_000 }] }
    expect(solvedValue(solveForTarget(withSpring, { unknown: 'bleed-fraction', target: 'crack', targetBoostPa: b }))).toBeCloseTo(
      (b * (r * Av + Ap - As) - F0) / (b * Ap),
      8,
    )
  })

  it('the trade’s worked example: nothing connected, 2.59 in² of valve at 1:1 cracking at 11.2 psi takes about 29 lbf', () => {
    // Common practice, no source: a 29 lbf spring on a 2.59 in² valve cracks at about 11.2 psi at 1:1 (29 / 2.59).
    const valveDiameterM = Math.sqrt((4 * toSI(units.in, 1) ** 2 * 2.59) / Math.PI)
    const s0 = scenario({ control: { kind: 'none' } })
    const example = { ...s0, wastegate: { ...s0.wastegate, valveDiameterM }, exhaust: { ...s0.exhaust, ratio: 1, driveAtZeroBoostPa: 0 } }
    const result = solveForTarget(example, { unknown: 'seat-force', target: 'crack', targetBoostPa: psi(11.2) })
    expect(fromSI(units.lbf, solvedValue(result))).toBeCloseTo(29, 0)
    // A bench test of that spring in this gate reads its seat force over A_p − A_s.
    expect(result.status === 'solved' && result.benchCrackPressurePa).toBeCloseTo(solvedValue(result) / (Ap - As), 9)
  })
})

describe('a band of drive-to-boost ratios', () => {
  const both = scenario({ control: { kind: 'both' }, supply: { kind: 'co2', regulatorSetpointPa: psi(10) } })

  it('returns the setpoint whose worst end of the band is closest to the target: both ends miss by as much', () => {
    const target = psi(20)
    const result = solveForTarget(both, { unknown: 'setpoint', target: 'crack', targetBoostPa: target, ratioBand: [1.4, 1.8] })
    if (result.status !== 'solved') throw new Error(result.message)
    const [low, high] = result.band.map((b) => b.boostPa!)
    expect(low).toBeGreaterThan(target)
    expect(high).toBeLessThan(target)
    expect(Math.abs(toPsi(low! - target) - toPsi(target - high!))).toBeLessThan(1e-6)
    // Any other setpoint leaves one end further off: the minimax.
    for (const delta of [-psi(0.5), psi(0.5)]) {
      const other = { ...result.scenario, supply: { ...result.scenario.supply, regulatorSetpointPa: result.value + delta } } as Scenario
      const worst = Math.max(
        ...[1.4, 1.8].map((ratio) => Math.abs(boostOf(computeBalance({ ...other, exhaust: { ...other.exhaust, ratio } }).crack) - target)),
      )
      expect(worst).toBeGreaterThan(result.worstMissPa)
    }
  })
})

describe('targets out of reach are results, not numbers', () => {
  const both = scenario({ control: { kind: 'both' }, supply: { kind: 'co2', regulatorSetpointPa: psi(10) } })

  it('a target below what the spring alone holds, with the nearest setpoint and its boost', () => {
    const result = solveForTarget(both, { unknown: 'setpoint', target: 'crack', targetBoostPa: psi(2) })
    expect(result).toMatchObject({ status: 'unreachable', reason: 'below-range' })
    if (result.status !== 'unreachable') return
    expect(result.message).toMatch(/below what the spring alone holds/)
    expect(result.nearest.value).toBe(0)
    expect(result.nearest.band[0]!.boostPa!).toBeGreaterThan(psi(2))
  })

  it('a target a solenoid cannot reach at 100 % duty', () => {
    const sol = scenario({ control: { kind: 'solenoid-3port', chamber: 'top', duty: 0.5 }, supply: { kind: 'co2', regulatorSetpointPa: psi(5) } })
    const result = solveForTarget(sol, { unknown: 'duty', target: 'crack', targetBoostPa: psi(60) })
    expect(result).toMatchObject({ status: 'unreachable', reason: 'above-range', nearest: { value: 1 } })
  })

  it('an unknown the arrangement has no place for is refused, naming the field', () => {
    const base = defaultScenario()
    expect(() => solveForTarget(base, { unknown: 'setpoint', target: 'crack', targetBoostPa: psi(10) })).toThrow(/^supply\.kind /)
    expect(() => solveForTarget(base, { unknown: 'duty', target: 'crack', targetBoostPa: psi(10) })).toThrow(/^control\.kind /)
    expect(() => solveForTarget(base, { unknown: 'bleed-fraction', target: 'crack', targetBoostPa: psi(10) })).toThrow(/^control\.kind /)
    expect(() => solveForTarget(base, { unknown: 'seat-force', target: 'crack', targetBoostPa: -1 })).toThrow(/target boost/)
  })
})

/** The unknowns a scenario's arrangement has a place for. */
function unknownsOf(s: Scenario): SolveUnknown[] {
  const c = s.control
  const out: SolveUnknown[] = ['seat-force']
  const feedsSupply =
    c.kind === 'top-supply' || c.kind === 'both' || c.kind === 'solenoid-4port' || (c.kind === 'solenoid-3port' && c.chamber === 'top')
  if (s.supply.kind !== 'boost' && feedsSupply) out.push('setpoint')
  if (c.kind === 'bleed-top') out.push('bleed-fraction')
  if (c.kind === 'solenoid-3port' || c.kind === 'solenoid-4port') out.push('duty')
  return out
}

describe('round trip: solve, put the answer in, run the balance', () => {
  it('meets a crack or full-open target within 0.01 psi over 200 seeded scenarios of every arrangement', () => {
    const cases = randomScenarios(20261205, 200)
    let solved = 0
    const families = new Set<string>()
    const unknowns = new Set<string>()
    for (const c of cases) {
      const s = c.scenario
      const own = computeBalance(s)
      if (own.crack.status !== 'opens') continue
      for (const unknown of unknownsOf(s)) {
        for (const target of ['crack', 'full-open'] as const) {
          // A target a little off the scenario's own, so the answer has to move.
          const goal = own.crack.boostPa * (0.9 + 0.2 * ((c.index * 7 + unknown.length) % 10) / 10)
          if (goal > 1_000_000) continue
          const result = solveForTarget(s, { unknown, target, targetBoostPa: goal })
          if (result.status !== 'solved') continue
          const back = computeBalance(result.scenario)
          const reached = target === 'crack' ? back.crack : back.fullOpen
          expect(Math.abs(toPsi(boostOf(reached) - goal)), `#${c.index} ${c.shape.family} ${unknown} for ${target}`).toBeLessThan(0.01)
          solved++
          families.add(c.shape.family)
          unknowns.add(unknown)
        }
      }
    }
    console.log(`target solve round trip: ${solved} static solves met their target, ${families.size} arrangements, unknowns ${[...unknowns].join(", ")}`)
    expect(solved).toBeGreaterThanOrEqual(200)
    // Every arrangement but the closed loops (their duty is the loop's own) and every unknown took part.
    for (const family of FAMILIES.filter((f) => !f.startsWith('closed-loop'))) expect(families, family).toContain(family)
    expect([...unknowns].sort()).toEqual(['bleed-fraction', 'duty', 'seat-force', 'setpoint'])
  })

  it('meets a settled-boost target within 0.1 psi by a few pulls, for each kind of unknown', () => {
    const co2 = { kind: 'co2', regulatorSetpointPa: psi(10) }
    const cases: [string, Scenario, SolveUnknown, number][] = [
      ['default, seat force', defaultScenario(), 'seat-force', psi(6)],
      ['both ports on CO₂, setpoint', scenario({ control: { kind: 'both' }, supply: co2 }), 'setpoint', psi(14)],
      ['bleed to the top, fraction', scenario({ control: { kind: 'bleed-top', fraction: 0.2 } }), 'bleed-fraction', psi(6)],
      ['three-port on CO₂, duty', scenario({ control: { kind: 'solenoid-3port', chamber: 'top', duty: 0.5 }, supply: { ...co2, regulatorSetpointPa: psi(15) } }), 'duty', psi(12)],
    ]
    for (const [label, s, unknown, goal] of cases) {
      const result = solveForTarget(s, { unknown, target: 'settled', targetBoostPa: goal })
      if (result.status !== 'solved') throw new Error(`${label}: ${result.message}`)
      expect(result.pulls, label).toBeLessThanOrEqual(12)
      expect(result.band.every((b) => b.settles), `${label}: the answer's pull settles`).toBe(true)
      const settled = runPull(result.scenario).metrics.settledBoostPa!
      expect(Math.abs(toPsi(settled - goal)), label).toBeLessThan(0.1)
    }
  })
})
