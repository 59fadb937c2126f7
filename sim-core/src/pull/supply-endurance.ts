import { co2BottlePressurePa } from '../co2.ts'

/**
 * How long a supply holds its setpoint over repeated pulls (MODEL.md §4 Supplies, §5): pulls per CO₂ bottle,
 * and back-to-back pulls on a compressor and tank. Pressures absolute, Pa.
 */

export interface Co2BottleSpec {
  volumeM3: number
  fillMassKg: number
  temperatureK: number
}

/**
 * The least CO₂ mass at which the bottle still holds `minimumPa` (absolute): the liquid keeps the bottle at its
 * saturation pressure until it is gone, then the gas pressure falls with the mass left.
 */
export function co2MinimumUsableMassKg(bottle: Co2BottleSpec, minimumPa: number): number {
  const pressure = (m: number) => co2BottlePressurePa({ volumeM3: bottle.volumeM3, massKg: m, temperatureK: bottle.temperatureK })
  if (pressure(bottle.fillMassKg) < minimumPa) return bottle.fillMassKg
  let lo = 1e-9 * bottle.fillMassKg
  let hi = bottle.fillMassKg
  if (pressure(lo) >= minimumPa) return lo
  for (let i = 0; i < 80 && hi - lo > 1e-12 * bottle.fillMassKg; i++) {
    const mid = 0.5 * (lo + hi)
    if (pressure(mid) >= minimumPa) hi = mid
    else lo = mid
  }
  return hi
}

/** Whole pulls a full bottle gives at `gasPerPullKg` each while it holds `minimumPa`; null when a pull uses no gas. */
export function co2PullsPerBottle(bottle: Co2BottleSpec, minimumPa: number, gasPerPullKg: number): number | null {
  if (!(gasPerPullKg > 0)) return null
  return Math.floor((bottle.fillMassKg - co2MinimumUsableMassKg(bottle, minimumPa)) / gasPerPullKg)
}

export interface TankCycle {
  /** Tank pressure when the first pull starts, and whether the compressor is running then. */
  startPa: number
  compressorOn: boolean
  pullDurationS: number
  gasPerPullKg: number
  /** R·T/V of the tank, Pa/kg. */
  pressurePerKg: number
  /** Compressor delivery at zero gauge, kg/s, falling linearly to zero at `maxPa`. */
  ratedKgS: number
  ambientPa: number
  maxPa: number
  cutInPa: number
  cutOutPa: number
  /** The lowest tank pressure that still holds the setpoint (setpoint + droop). */
  holdPa: number
}

/**
 * Back-to-back pulls that hold the setpoint, with each pull's draw spread evenly over it. The compressor starts at
 * cut-in and then runs while the tank falls; its delivery falls linearly with pressure, so the tank approaches the
 * pressure at which delivery equals the draw exponentially. Returns null pulls when that never drops below `holdPa`.
 */
export function backToBackPulls(c: TankCycle): { pulls: number | null; keepsUp: boolean } {
  if (c.startPa < c.holdPa) return { pulls: 0, keepsUp: false }
  const draw = c.gasPerPullKg / c.pullDurationS
  if (!(draw > 0)) return { pulls: null, keepsUp: true }
  let t = 0
  let p = c.startPa
  if (!c.compressorOn && p > c.cutInPa) {
    const floor = Math.max(c.cutInPa, c.holdPa)
    t += (p - floor) / (c.pressurePerKg * draw)
    p = floor
    if (floor === c.holdPa) return { pulls: Math.floor(t / c.pullDurationS), keepsUp: false }
  }
  const gaugeSpan = c.maxPa - c.ambientPa
  const equilibrium = c.ambientPa + gaugeSpan * (1 - draw / c.ratedKgS)
  if (equilibrium >= c.holdPa) return { pulls: null, keepsUp: true }
  const rate = (c.pressurePerKg * c.ratedKgS) / gaugeSpan
  t += Math.log((p - equilibrium) / (c.holdPa - equilibrium)) / rate
  return { pulls: Math.floor(t / c.pullDurationS), keepsUp: false }
}
