import { AIR } from './gas.ts'
import type { Scenario } from './scenario.ts'

/**
 * The compressor's speed line (MODEL.md §4, a simple model of our own, with the §4a guards):
 *   tip speed U = ω·r_c,
 *   zero-flow pressure ratio Π0 = (1 + ψ·U²/(2·c_pa·T_amb))^(γ/(γ−1)),
 *   maximum flow ṁ_max = Φ·ρ_amb·U·A_ind,
 *   ((Π−1)/(Π0−1))² + (ṁ/ṁ_max)² = 1, so ṁ_c = ṁ_max·√max(0, 1 − (max(Π−1, 0)/(Π0−1))²),
 *   power P_c = ṁ_c·c_pa·T_amb·(Π^((γ−1)/γ) − 1)/η_c, never below zero.
 * Below ambient (Π < 1) the line is held at its maximum flow, and the shaft is kept above a minimum speed
 * by the caller so Π0 − 1 stays positive.
 */

export interface CompressorConstants {
  tipRadiusM: number
  /** ψ/(2·c_pa·T_amb), s²/m². */
  headPerTipSpeed2: number
  /** Φ·ρ_amb·A_ind, kg/m. */
  flowPerTipSpeed: number
  /** c_pa·T_amb/η_c, J/kg. */
  powerPerUnitWork: number
  /** (γ−1)/γ of air. */
  exponent: number
}

export function compressorConstants(turbo: Scenario['turbo'], ambient: Scenario['ambient']): CompressorConstants {
  const rhoAmbient = ambient.pressurePa / (AIR.gasConstant * ambient.temperatureK)
  const inducerM2 = (Math.PI * turbo.inducerDiameterM * turbo.inducerDiameterM) / 4
  return Object.freeze({
    tipRadiusM: turbo.compressorTipRadiusM,
    headPerTipSpeed2: turbo.headCoefficient / (2 * AIR.cp * ambient.temperatureK),
    flowPerTipSpeed: turbo.flowCoefficient * rhoAmbient * inducerM2,
    powerPerUnitWork: (AIR.cp * ambient.temperatureK) / turbo.compressorEfficiency,
    exponent: (AIR.gamma - 1) / AIR.gamma,
  })
}

export interface CompressorPoint {
  massFlowKgS: number
  powerW: number
  /** Π0 of the speed line at this shaft speed. */
  zeroFlowPressureRatio: number
  maxFlowKgS: number
  /** Π at or beyond the zero-flow line (surge risk). */
  pastZeroFlowLine: boolean
}

/** Zero-flow pressure ratio Π0 at a shaft speed. */
export function zeroFlowPressureRatio(c: CompressorConstants, shaftSpeedRadS: number): number {
  const u = shaftSpeedRadS * c.tipRadiusM
  return (1 + c.headPerTipSpeed2 * u * u) ** (1 / c.exponent)
}

/** Delivered flow on the speed line, kg/s. */
export function compressorFlowKgS(c: CompressorConstants, shaftSpeedRadS: number, pressureRatio: number): number {
  const u = shaftSpeedRadS * c.tipRadiusM
  const rise = (1 + c.headPerTipSpeed2 * u * u) ** (1 / c.exponent) - 1
  const z = Math.max(pressureRatio - 1, 0) / rise
  return z >= 1 ? 0 : c.flowPerTipSpeed * u * Math.sqrt(1 - z * z)
}

/** Shaft power the compressor takes to deliver `massFlowKgS` at `pressureRatio`, W (≥ 0). */
export function compressorPowerW(c: CompressorConstants, massFlowKgS: number, pressureRatio: number): number {
  if (pressureRatio <= 1 || massFlowKgS <= 0) return 0
  return massFlowKgS * c.powerPerUnitWork * (pressureRatio ** c.exponent - 1)
}

/** The operating point at a shaft speed and pressure ratio p_im/p_amb. */
export function compressorSpeedLine(c: CompressorConstants, shaftSpeedRadS: number, pressureRatio: number): CompressorPoint {
  if (!(shaftSpeedRadS > 0)) throw new RangeError(`shaft speed must be above zero, got ${shaftSpeedRadS} rad/s`)
  const zeroFlow = zeroFlowPressureRatio(c, shaftSpeedRadS)
  const massFlowKgS = compressorFlowKgS(c, shaftSpeedRadS, pressureRatio)
  return {
    massFlowKgS,
    powerW: compressorPowerW(c, massFlowKgS, pressureRatio),
    zeroFlowPressureRatio: zeroFlow,
    maxFlowKgS: c.flowPerTipSpeed * shaftSpeedRadS * c.tipRadiusM,
    pastZeroFlowLine: pressureRatio >= zeroFlow,
  }
}
