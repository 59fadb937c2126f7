import { describe, expect, it } from 'vitest'
import { CO2_BOTTLE_SIZES, CO2_FILLING_RATIO_KG_M3, co2DefaultFillMassKg } from '../src/co2-bottles.ts'
import { expectClose } from './expect-close.ts'

describe('usual CO₂ bottle sizes', () => {
  it('lists 2.5, 5, 10, 15 and 20 lb bottles by nominal CO₂ mass (common practice, no source)', () => {
    expect(CO2_BOTTLE_SIZES.map((b) => b.label)).toEqual(['2.5 lb', '5 lb', '10 lb', '15 lb', '20 lb'])
    // 1 lb = 0.45359237 kg exactly (international pound).
    expectClose(CO2_BOTTLE_SIZES[1]!.nominalMassKg, 2.26796185, 1e-12, '5 lb, kg')
  })

  it('sizes each bottle at 0.68 kg of CO₂ per litre of water volume (common practice, no source)', () => {
    expect(CO2_FILLING_RATIO_KG_M3).toBe(680)
    for (const b of CO2_BOTTLE_SIZES) {
      expectClose(b.nominalMassKg / b.waterVolumeM3, 680, 1e-9, `${b.label} fill density, kg/m³`)
      expectClose(co2DefaultFillMassKg(b.waterVolumeM3), b.nominalMassKg, 1e-12, `${b.label} default fill, kg`)
    }
    // A 5 lb bottle: 2.268 kg / 0.68 kg/L = 3.34 L.
    expectClose(CO2_BOTTLE_SIZES[1]!.waterVolumeM3 * 1000, 3.335, 0.001, '5 lb water volume, L')
  })

  it('fills a bottle at 0.68 kg/L and refuses a volume that is not positive, naming it', () => {
    expectClose(co2DefaultFillMassKg(0.001), 0.68, 1e-12, 'kg in 1 L')
    expect(() => co2DefaultFillMassKg(0)).toThrow(/waterVolumeM3/)
    expect(() => co2DefaultFillMassKg(Number.NaN)).toThrow(RangeError)
  })
})
