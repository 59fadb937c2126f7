import { describe, expect, it } from 'vitest'
import {
  co2BottleState,
  computeBalance,
  CO2_DENSEST_LIQUID_KG_M3,
  defaultScenario,
  parseScenario,
  supplySchema,
  toFieldIssues,
} from '../src/index.ts'

/** The issues of the default scenario changed by `patch` (which may delete or replace anything). */
function issuesOf(patch: (s: Record<string, unknown>) => void): { path: string; message: string }[] {
  const s = structuredClone(defaultScenario()) as unknown as Record<string, unknown>
  patch(s)
  const r = parseScenario(s)
  if (r.ok) throw new Error('expected the scenario to be refused')
  return r.issues
}

describe('scenario schema messages', () => {
  it.each(['engine', 'wastegate', 'springs', 'control', 'supply', 'exhaust'])('says a missing %s section is required', (name) => {
    expect(issuesOf((s) => delete s[name])).toEqual([{ path: name, message: 'is required' }])
  })

  it('names a section, a list and a table row of the wrong kind', () => {
    expect(issuesOf((s) => (s.engine = 'two litres'))).toEqual([{ path: 'engine', message: 'must be an object' }])
    expect(issuesOf((s) => (s.ambient = null))).toEqual([{ path: 'ambient', message: 'must be an object' }])
    expect(issuesOf((s) => (s.springs = 129))).toEqual([{ path: 'springs', message: 'must be a list' }])
    expect(
      issuesOf((s) => (s.engine = { ...(s.engine as object), volumetricEfficiencyByRpm: [0.9] })),
    ).toEqual([{ path: 'engine.volumetricEfficiencyByRpm.0', message: 'must be an object' }])
  })

  it('lists the choices of a choice field, and wants true or false for a switch', () => {
    expect(issuesOf((s) => (s.exhaust = { ...(s.exhaust as object), mode: 'pulse' }))).toEqual([
      { path: 'exhaust.mode', message: 'must be one of "ratio", "turbine"' },
    ])
    expect(issuesOf((s) => (s.control = { kind: 'bleed-top', fraction: 0.2, bottomOnBoost: 'yes' }))).toEqual([
      { path: 'control.bottomOnBoost', message: 'must be true or false' },
    ])
    expect(issuesOf((s) => (s.supply = { kind: 'nitrogen' }))).toEqual([
      { path: 'supply.kind', message: 'must be one of "boost", "co2", "compressor"' },
    ])
  })

  it('refuses something other than an object as the whole scenario', () => {
    expect(parseScenario(undefined)).toEqual({ ok: false, issues: [{ path: '', message: 'is required' }] })
    expect(parseScenario([])).toEqual({ ok: false, issues: [{ path: '', message: 'must be an object' }] })
  })
})

describe('CO₂ bottle fill', () => {
  const co2 = (fillMassKg: number, bottleVolumeM3: number, bottleTemperatureK: number) => ({
    kind: 'co2',
    regulatorSetpointPa: 68_948,
    fillMassKg,
    bottleVolumeM3,
    bottleTemperatureK,
  })

  it('is refused when denser than saturated liquid CO₂ can be, on supply.fillMassKg, naming the limit', () => {
    // 1178.5 kg/m³: Span & Wagner's ancillary eq. 3.14 at the triple point (J. Phys. Chem. Ref. Data 25, 1509, 1996;
    // their tabulated triple-point liquid density is 1178.46 kg/m³, from memory).
    expect(CO2_DENSEST_LIQUID_KG_M3).toBeCloseTo(1178.5, 0)
    const issues = issuesOf((s) => (s.supply = co2(6, 0.005, 298.15)))
    expect(issues).toHaveLength(1)
    expect(issues[0]!.path).toBe('supply.fillMassKg')
    expect(issues[0]!.message).toContain('1200.0 kg/m³, above the density limit of 1178.5 kg/m³')
  })

  it('is refused by the supply section on its own too (the hardware library)', () => {
    const r = supplySchema.safeParse(co2(1.2, 0.001, 298.15))
    expect(r.success).toBe(false)
    if (!r.success) expect(toFieldIssues(r.error).map((i) => i.path)).toEqual(['fillMassKg'])
  })

  it('just under the limit is accepted, and its bottle state is computed without throwing, cold or hot', () => {
    const volume = 0.0046
    const mass = 0.999 * CO2_DENSEST_LIQUID_KG_M3 * volume
    for (const temperatureK of [230, 298.15, 350]) {
      const parsed = parseScenario({ ...defaultScenario(), control: { kind: 'top-supply' }, supply: co2(mass, volume, temperatureK) })
      expect(parsed.ok).toBe(true)
      if (!parsed.ok || parsed.scenario.supply.kind !== 'co2') continue
      const { bottleVolumeM3, fillMassKg, bottleTemperatureK } = parsed.scenario.supply
      const bottle = co2BottleState({ volumeM3: bottleVolumeM3, massKg: fillMassKg, temperatureK: bottleTemperatureK })
      expect(Number.isFinite(bottle.pressurePa)).toBe(true)
      expect(bottle.warning).toBeDefined()
      expect(computeBalance(parsed.scenario).crack.status).toBe('opens')
    }
  })
})

describe('numbers that must fit together', () => {
  it('refuses each pair that cannot, naming the field to change', () => {
    const cases: [string, (s: Record<string, unknown>) => void, { path: string; message: RegExp }][] = [
      [
        // 62 mm diaphragm at 12 mm of lift sweeps 36.2 cm³: a 30 cm³ top chamber cannot hold the stroke.
        'a top chamber smaller than the stroke',
        (s) => (s.wastegate = { ...(s.wastegate as object), actuatorDiameterM: 0.062, maxLiftM: 0.012, topChamberVolumeM3: 30e-6 }),
        { path: 'wastegate.topChamberVolumeM3', message: /must exceed the volume the piston sweeps at full lift \(36\.2 cm³\)/ },
      ],
      [
        'a compressor that cuts out below its cut-in',
        (s) => (s.supply = { kind: 'compressor', regulatorSetpointPa: 70_000, cutInPa: 900_000, cutOutPa: 800_000 }),
        { path: 'supply.cutOutPa', message: /must be above supply\.cutInPa/ },
      ],
      [
        'a compressor whose flow stops below its cut-out',
        (s) => (s.supply = { kind: 'compressor', regulatorSetpointPa: 70_000, maxPressurePa: 1_000_000 }),
        { path: 'supply.maxPressurePa', message: /must be above supply\.cutOutPa/ },
      ],
      [
        'a closed loop whose highest duty is below its lowest',
        (s) => (s.control = { kind: 'closed-loop', targetBoostPa: 80_000, dutyMin: 0.6, dutyMax: 0.4 }),
        { path: 'control.dutyMax', message: /must be at least control\.dutyMin/ },
      ],
      [
        'a boost target table whose rpm does not rise',
        (s) => (s.control = { kind: 'closed-loop', targetBoostPa: 80_000, targetByRpm: [{ rpm: 5000, boostPa: 80_000 }, { rpm: 5000, boostPa: 90_000 }] }),
        { path: 'control.targetByRpm.1.rpm', message: /must be larger than the rpm before it/ },
      ],
      [
        'a drive-to-boost ratio table whose rpm does not rise',
        (s) => (s.exhaust = { ...(s.exhaust as object), ratioByRpm: [{ rpm: 6000, ratio: 1.5 }, { rpm: 4000, ratio: 1.7 }] }),
        { path: 'exhaust.ratioByRpm.1.rpm', message: /must be larger than the rpm before it/ },
      ],
    ]
    for (const [what, patch, expected] of cases) {
      const issues = issuesOf(patch)
      expect(issues, what).toHaveLength(1)
      expect(issues[0]!.path, what).toBe(expected.path)
      expect(issues[0]!.message, what).toMatch(expected.message)
    }
  })
})
