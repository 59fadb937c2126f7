import { describe, expect, it } from 'vitest'
import { compressorConstants, compressorSpeedLine } from '../src/compressor.ts'
import { AIR } from '../src/gas.ts'
import { defaultScenario } from '../src/scenario.ts'
import { expectClose } from './expect-close.ts'

describe('compressor speed line (MODEL.md §4)', () => {
  const s = defaultScenario()
  const c = compressorConstants(s.turbo, s.ambient)
  const omega = 10_000 // rad/s

  it('delivers its maximum flow Φ·ρ_amb·U·A_ind at Π = 1 and nothing at Π0', () => {
    const top = compressorSpeedLine(c, omega, 1)
    const u = omega * s.turbo.compressorTipRadiusM
    const rho = s.ambient.pressurePa / (AIR.gasConstant * s.ambient.temperatureK)
    const maxFlow = s.turbo.flowCoefficient * rho * u * ((Math.PI * s.turbo.inducerDiameterM ** 2) / 4)
    expectClose(top.massFlowKgS, maxFlow, maxFlow * 1e-12, 'flow at Π = 1')
    const pi0 = (1 + (s.turbo.headCoefficient * u * u) / (2 * AIR.cp * s.ambient.temperatureK)) ** 3.5
    expectClose(top.zeroFlowPressureRatio, pi0, 1e-12, 'Π0')
    const end = compressorSpeedLine(c, omega, top.zeroFlowPressureRatio)
    expect(end.massFlowKgS).toBe(0)
    expect(end.pastZeroFlowLine).toBe(true)
  })

  it('lies on the ellipse ((Π−1)/(Π0−1))² + (ṁ/ṁ_max)² = 1 and takes the isentropic power over η_c', () => {
    const pi0 = compressorSpeedLine(c, omega, 1).zeroFlowPressureRatio
    const pi = 1 + 0.6 * (pi0 - 1)
    const p = compressorSpeedLine(c, omega, pi)
    expectClose((p.massFlowKgS / p.maxFlowKgS) ** 2 + 0.36, 1, 1e-12, 'ellipse')
    const power = (p.massFlowKgS * AIR.cp * s.ambient.temperatureK * (pi ** (0.4 / 1.4) - 1)) / s.turbo.compressorEfficiency
    expectClose(p.powerW, power, power * 1e-12, 'power, W')
  })

  it('holds its maximum flow and takes no power below ambient (MODEL.md §4a)', () => {
    const p = compressorSpeedLine(c, omega, 0.8)
    expectClose(p.massFlowKgS, p.maxFlowKgS, 1e-15)
    expect(p.powerW).toBe(0)
    expect(() => compressorSpeedLine(c, 0, 1)).toThrow(/shaft speed/)
  })
})
