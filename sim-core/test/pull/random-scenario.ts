import { parseScenario, type FieldIssue, type Scenario, type ScenarioInput } from '../../src/index.ts'

/**
 * Seeded random scenarios for the random suite (random-scenarios.test.ts). Scenario `index` of seed `seed` is
 * the same on every machine and can be rebuilt alone with `scenarioAt(seed, index)`, so a failing case is
 * reproduced from the two numbers in its test name.
 *
 * The generator writes scenario *input* (the schema's input type) and passes it through `parseScenario`, so
 * every field it leaves out takes the schema's default, including fields added after this file was written.
 *
 * The ranges below are plausible real hardware and driving (common practice, no source): they are there to
 * keep the draws where users are, not to bound what the model accepts.
 */

/** mulberry32: a small 32-bit generator, good enough to spread test cases (not for statistics). */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

/** One 32-bit stream per (seed, index, attempt), so rebuilding one case does not need the cases before it. */
function streamSeed(seed: number, index: number, attempt: number): number {
  let h = Math.imul(seed ^ 0x9e3779b9, 0x85ebca6b)
  h = Math.imul(h ^ (index + 0x27d4eb2f) ^ (h >>> 13), 0xc2b2ae35)
  h = Math.imul(h ^ (attempt + 0x165667b1) ^ (h >>> 16), 0x85ebca6b)
  return (h ^ (h >>> 15)) >>> 0
}

/** The control arrangements the suite covers, one family each; the three-port solenoid on either chamber. */
export const FAMILIES = [
  'none',
  'bottom-boost',
  'top-supply',
  'both',
  'bleed-top',
  'solenoid-3port-bottom',
  'solenoid-3port-top',
  'solenoid-4port',
  'closed-loop',
  'closed-loop-by-rpm',
] as const
export type Family = (typeof FAMILIES)[number]

export const SUPPLIES = ['boost', 'co2', 'compressor'] as const
export const DOWNSTREAMS = ['vented', 'restricted', 'recirculated'] as const
export const EXHAUST_MODES = ['ratio', 'turbine'] as const

type Supply = (typeof SUPPLIES)[number]
type Downstream = (typeof DOWNSTREAMS)[number]
type ExhaustMode = (typeof EXHAUST_MODES)[number]

/**
 * What a case is made of before any number is drawn. The family cycles fastest, then the supply, the downstream
 * and the exhaust mode, so every family meets every supply, downstream and mode within the first 180 cases.
 */
export interface CaseShape {
  family: Family
  supply: Supply
  downstream: Downstream
  exhaustMode: ExhaustMode
}

export function shapeAt(index: number): CaseShape {
  const f = FAMILIES.length
  return {
    family: FAMILIES[index % f]!,
    supply: SUPPLIES[Math.floor(index / f) % SUPPLIES.length]!,
    downstream: DOWNSTREAMS[Math.floor(index / (f * SUPPLIES.length)) % DOWNSTREAMS.length]!,
    exhaustMode: EXHAUST_MODES[Math.floor(index / (f * SUPPLIES.length * DOWNSTREAMS.length)) % EXHAUST_MODES.length]!,
  }
}

const PSI = 6894.757 // Pa per psi (NIST SP 811)
const LITRE = 1e-3
const MM = 1e-3
const SCFM = 0.00047194745 // m³/s per ft³/min (NIST SP 811)

class Draw {
  constructor(private readonly next: () => number) {}
  uniform(lo: number, hi: number): number {
    return lo + (hi - lo) * this.next()
  }
  /** Even on a log scale: for coefficients that span decades. */
  logUniform(lo: number, hi: number): number {
    return Math.exp(this.uniform(Math.log(lo), Math.log(hi)))
  }
  int(lo: number, hi: number): number {
    return lo + Math.floor(this.next() * (hi - lo + 1))
  }
  chance(p: number): boolean {
    return this.next() < p
  }
  pick<T>(items: readonly T[]): T {
    return items[Math.floor(this.next() * items.length)]!
  }
  /** `n` positive shares that add up to 1. */
  shares(n: number): number[] {
    const w = Array.from({ length: n }, () => this.uniform(0.2, 1))
    const sum = w.reduce((a, b) => a + b, 0)
    return w.map((v) => v / sum)
  }
}

const area = (d: number) => (Math.PI * d * d) / 4

/** The input of one scenario of the given shape. */
export function randomScenarioInput(next: () => number, shape: CaseShape): ScenarioInput {
  const r = new Draw(next)

  const displacementM3 = r.uniform(1, 8) * LITRE
  const litres = displacementM3 / LITRE
  const rpmStart = Math.round(r.uniform(2000, 4500))
  const rpmEnd = Math.round(r.uniform(6000, 9000))
  const engine: ScenarioInput['engine'] = {
    displacementM3,
    volumetricEfficiency: r.uniform(0.8, 1.0),
    rpmStart,
    rpmEnd,
    // Real pulls run 3–8 s. Shorter than about 3 s, a late crack leaves a settling window of a few samples,
    // too short to say anything about the settled boost; longer only costs time.
    pullDurationS: r.uniform(3, 6),
    airFuelRatio: r.uniform(11, 13),
    exhaustTemperatureK: r.uniform(1000, 1250),
    chargeTemperatureK: r.uniform(300, 340),
    intakeVolumeM3: displacementM3 * r.uniform(1.5, 3),
    exhaustVolumeM3: displacementM3 * r.uniform(0.5, 1.5),
  }
  if (r.chance(0.2)) {
    const points = r.int(2, 5)
    engine.volumetricEfficiencyByRpm = Array.from({ length: points }, (_, i) => ({
      rpm: Math.round(rpmStart + ((rpmEnd - rpmStart) * i) / (points - 1)),
      volumetricEfficiency: r.uniform(0.75, 1.05),
    }))
  }
  if (r.chance(0.2)) engine.intercoolerEffectiveness = r.uniform(0.6, 0.85)

  // The turbo grows with the engine (one equivalent turbo for twins): wheel, inducer and rotor inertia.
  const tipRadiusM = (0.022 + 0.0035 * litres) * r.uniform(0.85, 1.15)
  const turbo: ScenarioInput['turbo'] = {
    compressorTipRadiusM: tipRadiusM,
    inducerDiameterM: 2 * tipRadiusM * r.uniform(0.7, 0.8),
    inertiaKgM2: 8e-5 * (tipRadiusM / 0.03) ** 2 * r.uniform(0.8, 1.25),
    compressorEfficiency: r.uniform(0.65, 0.78),
    turbineEfficiency: r.uniform(0.62, 0.75),
  }

  const valveDiameterM = r.uniform(25, 60) * MM
  const shaftDiameterM = r.uniform(6, 12) * MM
  const actuatorDiameterM = r.uniform(40, 110) * MM
  const maxLiftM = r.uniform(6, 20) * MM
  const wastegate: ScenarioInput['wastegate'] = {
    count: r.int(1, 4),
    valveDiameterM,
    shaftDiameterM,
    actuatorDiameterM,
    actuatorKind: r.pick(['diaphragm', 'piston'] as const),
    maxLiftM,
    movingMassKg: r.uniform(0.1, 0.4),
    dampingRatio: r.uniform(0.2, 0.5),
    portDiameterM: r.uniform(1.5, 5) * MM,
  }
  // Now and then a gate whose shaft passes differently: net areas within 10 % of the plain ones.
  if (r.chance(0.1)) {
    wastegate.bottomAreaM2 = (area(actuatorDiameterM) - area(shaftDiameterM)) * r.uniform(0.9, 1.1)
    wastegate.topAreaM2 = area(actuatorDiameterM) * r.uniform(0.9, 1.0)
  }
  // Chamber volumes: a quarter of the cases leave them to the schema, the rest give the actuator's own,
  // the swept volume of the top chamber at full lift and then some, plus fittings.
  if (r.chance(0.75)) {
    const topM2 = wastegate.topAreaM2 ?? area(actuatorDiameterM)
    wastegate.topChamberVolumeM3 = topM2 * maxLiftM * r.uniform(1.3, 3) + r.uniform(5, 30) * 1e-6
    wastegate.bottomChamberVolumeM3 = r.uniform(10, 60) * 1e-6
  }

  // Springs are sold and set up by the pressure that cracks them on the bench; seat forces follow from it.
  const bottomM2 = wastegate.bottomAreaM2 ?? area(actuatorDiameterM) - area(shaftDiameterM)
  const benchTotalPa = r.uniform(3, 25) * PSI
  const seatTotalN = benchTotalPa * bottomM2
  // Full lift adds 10–60 % to the seat force.
  const rateTotalNPerM = (seatTotalN * r.uniform(0.1, 0.6)) / maxLiftM
  const springs = r.shares(r.int(1, 3)).map((share) =>
    r.chance(0.5)
      ? { from: 'seat' as const, seatForceN: share * seatTotalN, rateNPerM: share * rateTotalNPerM }
      : { from: 'bench' as const, benchCrackPressurePa: share * benchTotalPa, rateNPerM: share * rateTotalNPerM },
  )

  const solenoid = () => ({ solenoidDiameterM: r.uniform(1, 3) * MM })
  const controlFor = (family: Family): ScenarioInput['control'] => {
    switch (family) {
      case 'none':
      case 'bottom-boost':
      case 'top-supply':
      case 'both':
        return { kind: family }
      case 'bleed-top':
        return { kind: 'bleed-top', fraction: r.uniform(0, 0.6), bottomOnBoost: r.chance(0.7) }
      case 'solenoid-3port-bottom':
      case 'solenoid-3port-top':
        return { kind: 'solenoid-3port', chamber: family === 'solenoid-3port-top' ? 'top' : 'bottom', duty: r.uniform(0, 1), ...solenoid() }
      case 'solenoid-4port':
        return { kind: 'solenoid-4port', duty: r.uniform(0, 1), ...solenoid() }
      case 'closed-loop':
      case 'closed-loop-by-rpm': {
        const dutyMin = r.chance(0.3) ? r.uniform(0, 0.2) : 0
        const dutyMax = r.chance(0.3) ? r.uniform(0.4, 1) : 1
        const control: ScenarioInput['control'] = { kind: 'closed-loop', targetBoostPa: r.uniform(3, 30) * PSI, dutyMin, dutyMax, ...solenoid() }
        if (family === 'closed-loop-by-rpm') {
          const points = r.int(2, 6)
          control.targetByRpm = Array.from({ length: points }, (_, i) => ({
            rpm: Math.round(rpmStart + ((rpmEnd - rpmStart) * i) / (points - 1)),
            boostPa: r.uniform(3, 30) * PSI,
          }))
        }
        return control
      }
    }
  }
  const control = controlFor(shape.family)

  // Boost lines: hose of 3–6 mm bore and 0.2–2 m, and now and then a restrictor in the line (a bleed jet or a
  // damping orifice, 0.8–2 mm), as shops plumb them.
  const line = () => {
    const l: NonNullable<NonNullable<ScenarioInput['plumbing']>['top']> = { boreM: r.uniform(3, 6) * MM, lengthM: r.uniform(0.2, 2) }
    if (r.chance(0.2)) l.restrictorDiameterM = r.uniform(0.8, 2) * MM
    return l
  }
  const plumbing: ScenarioInput['plumbing'] = r.chance(0.7) ? { top: line(), bottom: line() } : {}

  const setpointPa = r.uniform(0, 30) * PSI
  const supplyFor = (kind: Supply): ScenarioInput['supply'] => {
    switch (kind) {
      case 'boost':
        return { kind: 'boost' }
      case 'co2': {
        // 2.5 lb to 20 lb bottles, from nearly empty to a normal fill (about 0.68 kg per litre), cold to a hot car.
        const bottleVolumeM3 = r.uniform(1.5, 10) * LITRE
        return {
          kind: 'co2',
          regulatorSetpointPa: setpointPa,
          regulatorDroopPa: r.uniform(1, 5) * PSI,
          bottleVolumeM3,
          fillMassKg: bottleVolumeM3 * r.uniform(50, 700),
          bottleTemperatureK: r.uniform(263, 318),
        }
      }
      case 'compressor': {
        const cutInPa = r.uniform(90, 130) * PSI
        const cutOutPa = cutInPa + r.uniform(15, 40) * PSI
        const supply: ScenarioInput['supply'] = {
          kind: 'compressor',
          regulatorSetpointPa: setpointPa,
          regulatorDroopPa: r.uniform(1, 5) * PSI,
          tankVolumeM3: r.uniform(3, 20) * LITRE,
          cutInPa,
          cutOutPa,
          ratedFlowM3PerS: r.uniform(0.5, 2) * SCFM,
          maxPressurePa: cutOutPa + r.uniform(30, 60) * PSI,
        }
        if (r.chance(0.3)) supply.initialTankPa = r.uniform(0.5, 1) * cutOutPa
        return supply
      }
    }
  }
  const supply = supplyFor(shape.supply)

  const downstream: NonNullable<ScenarioInput['exhaust']['downstream']> =
    shape.downstream === 'restricted'
      ? { kind: 'restricted', coefficientPaPerKg2S2: r.logUniform(2e4, 1e6) }
      : { kind: shape.downstream }
  const exhaust: ScenarioInput['exhaust'] = {
    mode: shape.exhaustMode,
    ratio: r.uniform(1.0, 2.2),
    downstream,
    backPressureCoefficientPaPerKg2S2: r.logUniform(1e4, 2e5),
    // Effective turbine area grows with the engine's flow.
    turbineAreaM2: 4e-4 * litres * r.uniform(0.7, 1.4),
  }
  // Now and then a ratio that changes with rpm, as a measured drive pressure would (ratio mode reads it).
  if (r.chance(0.2)) {
    const points = r.int(2, 4)
    exhaust.ratioByRpm = Array.from({ length: points }, (_, i) => ({
      rpm: Math.round(rpmStart + ((rpmEnd - rpmStart) * i) / (points - 1)),
      ratio: r.uniform(1.0, 2.2),
    }))
  }

  const input: ScenarioInput = {
    ambient: { pressurePa: r.uniform(80_000, 102_000), temperatureK: r.uniform(263, 318) },
    engine,
    turbo,
    wastegate,
    springs,
    control,
    plumbing,
    supply,
    exhaust,
    // A step budget well above what the slowest pull that finishes needs (about 6,200 steps for 6 s in turbine
    // mode with a large turbine area, 600 for most), so a pull that stalls stops early and says so in a fraction
    // of a second instead of holding up the suite for the default budget's ten seconds or more.
    solver: { maxSteps: 10_000, settlingDelayS: r.uniform(0.5, 1) },
  }
  if (r.chance(0.5)) input.boostLimitPa = r.uniform(10, 35) * PSI
  return input
}

export interface GeneratedScenario {
  seed: number
  index: number
  shape: CaseShape
  input: ScenarioInput
  scenario: Scenario
  /** The schema's objections to earlier draws of this case, one list per refused draw. */
  refused: FieldIssue[][]
}

/** How many refused draws in a row mean the generator, not bad luck, is at fault. */
const MAX_ATTEMPTS = 20

/**
 * Every number to four significant figures, as a user would type it: a failing case's JSON stays readable, and
 * no margin the generator keeps (top chamber over its swept volume, cut-out over cut-in) is anywhere near that fine.
 */
function roundNumbers<T>(value: T): T {
  if (typeof value === 'number') return (Number.isInteger(value) ? value : Number(value.toPrecision(4))) as T
  if (Array.isArray(value)) return value.map(roundNumbers) as T
  if (value !== null && typeof value === 'object') {
    return Object.fromEntries(Object.entries(value).map(([k, v]) => [k, roundNumbers(v)])) as T
  }
  return value
}

/** Case `index` of seed `seed`: drawn until the schema takes it. */
export function scenarioAt(seed: number, index: number): GeneratedScenario {
  const shape = shapeAt(index)
  const refused: FieldIssue[][] = []
  for (let attempt = 0; attempt < MAX_ATTEMPTS; attempt++) {
    const input = roundNumbers(randomScenarioInput(mulberry32(streamSeed(seed, index, attempt)), shape))
    const parsed = parseScenario(input)
    if (parsed.ok) return { seed, index, shape, input, scenario: parsed.scenario, refused }
    refused.push(parsed.issues)
  }
  const last = refused.at(-1)?.map((i) => `${i.path}: ${i.message}`).join('; ')
  throw new Error(`the schema refused ${MAX_ATTEMPTS} draws of case ${index} (seed ${seed}) in a row; the last: ${last}`)
}

/** Cases 0 … count − 1 of a seed. */
export function randomScenarios(seed: number, count: number): GeneratedScenario[] {
  return Array.from({ length: count }, (_, index) => scenarioAt(seed, index))
}
