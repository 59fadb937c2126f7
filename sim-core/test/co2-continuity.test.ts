import { describe, expect, it } from 'vitest'
import { CO2_CRITICAL, co2BottlePressurePa, co2BottleState, co2EosSaturation, type Co2Phase } from '../src/co2.ts'

/**
 * The bottle pressure has no jump at any phase boundary: two-phase ↔ liquid-full, two-phase ↔ gas, liquid-full or
 * two-phase ↔ supercritical. Two checks. A sweep in small steps, where no step may change the pressure by more than
 * twice the largest local slope times the step (a jump shows as one step far steeper than the slope on either side
 * of it). And each boundary the sweep crosses, pinned down by bisection, where the pressure a hair either side must
 * agree to what the slope allows over that hair (a tighter test than any sweep).
 */

interface Point {
  x: number
  pressurePa: number
  phase: Co2Phase
}

function sweep(from: number, to: number, step: number, at: (x: number) => Point): Point[] {
  const points: Point[] = []
  for (let i = 0; from + i * step <= to + 1e-9; i++) points.push(at(from + i * step))
  return points
}

/** |p(x + h) − p(x − h)|/(2h) with a small h: the local slope, one-sided at a kink. */
function slope(at: (x: number) => Point, x: number, h: number): number {
  return Math.max(
    Math.abs(at(x + h).pressurePa - at(x).pressurePa) / h,
    Math.abs(at(x).pressurePa - at(x - h).pressurePa) / h,
  )
}

function expectNoJumpInSweep(points: Point[], at: (x: number) => Point, what: string): void {
  for (let i = 0; i + 1 < points.length; i++) {
    const a = points[i]!
    const b = points[i + 1]!
    const dx = b.x - a.x
    const h = dx * 1e-3
    const allowed = 2 * Math.max(slope(at, a.x, h), slope(at, b.x, h)) * dx
    const jump = Math.abs(b.pressurePa - a.pressurePa)
    expect(jump, `${what}: Δp from ${a.x} (${a.phase}) to ${b.x} (${b.phase}) against ${allowed} Pa`).toBeLessThanOrEqual(
      allowed + 1e-9 * a.pressurePa,
    )
  }
}

/** Every phase change in the sweep, bisected to a hair, with the pressure on both sides. */
function expectContinuousAtBoundaries(points: Point[], at: (x: number) => Point, what: string): Co2Phase[][] {
  const crossed: Co2Phase[][] = []
  for (let i = 0; i + 1 < points.length; i++) {
    let a = points[i]!
    let b = points[i + 1]!
    if (a.phase === b.phase) continue
    crossed.push([a.phase, b.phase])
    for (let k = 0; k < 60 && b.x - a.x > 1e-12 * Math.abs(a.x); k++) {
      const mid = at((a.x + b.x) / 2)
      if (mid.phase === a.phase) a = mid
      else b = mid
    }
    // The slope on either side, over a step much wider than the hair.
    const dx = Math.max(b.x - a.x, 1e-12 * Math.abs(a.x))
    const wide = 1e-4 * (points[i + 1]!.x - points[i]!.x)
    const s = Math.max(
      Math.abs(at(a.x).pressurePa - at(a.x - wide).pressurePa) / wide,
      Math.abs(at(b.x + wide).pressurePa - at(b.x).pressurePa) / wide,
    )
    expect(
      Math.abs(b.pressurePa - a.pressurePa),
      `${what}: ${a.phase} at ${a.x} → ${b.phase} at ${b.x}: ${a.pressurePa} against ${b.pressurePa} Pa`,
    ).toBeLessThanOrEqual(2 * s * dx + 1e-7 * a.pressurePa)
  }
  return crossed
}

const byTemperature = (fillKgM3: number) => (temperatureK: number): Point => {
  const s = co2BottleState({ volumeM3: 1, massKg: fillKgM3, temperatureK })
  return { x: temperatureK, pressurePa: s.pressurePa, phase: s.phase }
}

const byFill = (temperatureK: number) => (fillKgM3: number): Point => {
  const s = co2BottleState({ volumeM3: 1, massKg: fillKgM3, temperatureK })
  return { x: fillKgM3, pressurePa: s.pressurePa, phase: s.phase }
}

describe('CO₂ bottle pressure is continuous across every phase boundary', () => {
  it('for a normally filled bottle (0.68 kg/L) from 240 to 340 K in 0.05 K steps: liquid-full near 27 °C, then T_c', () => {
    const at = byTemperature(680)
    const points = sweep(240, 340, 0.05, at)
    expectNoJumpInSweep(points, at, '680 kg/m³')
    const crossed = expectContinuousAtBoundaries(points, at, '680 kg/m³')
    expect(crossed).toEqual([
      ['two-phase', 'liquid-full'],
      ['liquid-full', 'supercritical'],
    ])
    // ρ′ = 680 kg/m³ between 298 K (712.77) and 300 K (679.24) (Span & Wagner 1996, Table 34): the liquid fills
    // the bottle at about 27 °C.
    const full = points.find((p) => p.phase === 'liquid-full')!
    expect(full.x).toBeGreaterThan(298)
    expect(full.x).toBeLessThan(300.05)
  })

  it('for other fills from 240 to 340 K: through the gas, two-phase and critical boundaries', () => {
    const fills: [number, Co2Phase[][]][] = [
      // Mostly vapour: the liquid boils away, then the gas goes supercritical.
      [100, [['two-phase', 'gas'], ['gas', 'supercritical']]],
      [300, [['two-phase', 'gas'], ['gas', 'supercritical']]],
      // The critical fill: two-phase right up to T_c.
      [CO2_CRITICAL.densityKgM3, [['two-phase', 'supercritical']]],
      [600, [['two-phase', 'liquid-full'], ['liquid-full', 'supercritical']]],
      // Overfilled: liquid-full from about 17 °C.
      [800, [['two-phase', 'liquid-full'], ['liquid-full', 'supercritical']]],
    ]
    for (const [fill, phases] of fills) {
      const at = byTemperature(fill)
      const points = sweep(240, 340, 0.05, at)
      expectNoJumpInSweep(points, at, `${fill} kg/m³`)
      expect(expectContinuousAtBoundaries(points, at, `${fill} kg/m³`)).toEqual(phases)
    }
  })

  it('for fill density at fixed temperatures, through the saturated vapour and liquid densities', () => {
    for (const t of [240, 280, 300, 304, 304.12]) {
      const at = byFill(t)
      const points = sweep(1, 1170, 0.5, at)
      expectNoJumpInSweep(points, at, `${t} K`)
      expect(expectContinuousAtBoundaries(points, at, `${t} K`)).toEqual([
        ['gas', 'two-phase'],
        ['two-phase', 'liquid-full'],
      ])
    }
  })

  it('right at the saturated densities, where the equation of state meets the saturation pressure', () => {
    for (const t of [220, 250, 280, 300, 304]) {
      const s = co2EosSaturation(t)
      for (const rho of [s.vapourDensityKgM3, s.liquidDensityKgM3]) {
        const inside = co2BottlePressurePa({ volumeM3: 1, massKg: rho * (rho === s.liquidDensityKgM3 ? 1 - 1e-12 : 1 + 1e-12), temperatureK: t })
        const on = co2BottlePressurePa({ volumeM3: 1, massKg: rho, temperatureK: t })
        expect(inside).toBe(s.pressurePa)
        expect(Math.abs(on - inside) / inside, `${rho} kg/m³ at ${t} K`).toBeLessThan(1e-9)
      }
    }
  })
})
