import { describe, expect, it } from 'vitest'
import { chamberPlumbing, chamberVolumes, CO2_GAS_CONSTANT, defaultScenario, runPull } from '../../src/index.ts'
import { co2Supply, psi, scenarioWith } from './pull-helpers.ts'

/**
 * A chamber filling through a choked orifice, against its closed form (MODEL.md §4b, checks). An isothermal chamber
 * of volume V fed from a source at p_s through C_d·A gains mass at the choked rate
 * ṁ* = C_d·A·p_s/√(R·T)·√γ·(2/(γ + 1))^((γ + 1)/(2(γ − 1))) (NASA Glenn Research Center, "Mass flow choking"), so
 * its pressure rises on a straight line, dp/dt = ṁ*·R·T/V, for as long as p < p_s·(2/(γ + 1))^(γ/(γ − 1)).
 */

describe('a chamber filling through a choked orifice', () => {
  it('rises on the closed-form straight line while the flow is choked', () => {
    const base = defaultScenario()
    // The top port fed from CO₂ at 100 psi through a 0.3 mm jet, the chamber at ambient as the pull starts; the spring
    // holds the valve shut for the first two seconds, so the chamber's volume does not change.
    const s = scenarioWith({
      control: { kind: 'top-supply' },
      supply: co2Supply(100),
      plumbing: { top: { restrictorDiameterM: 0.0003 } },
      solver: { ...base.solver, sampleIntervalS: 0.001 },
    })
    const r = runPull(s, { startChambers: 'vented' })
    expect(r.stats.chambers.top).toBe('full')

    const gamma = 1.29 // CO₂ in the chamber (gases.ts)
    const rt = CO2_GAS_CONSTANT * s.ambient.temperatureK
    const pSource = s.ambient.pressurePa + psi(100)
    const jet = s.wastegate.portDischargeCoefficient * (Math.PI / 4) * 0.0003 ** 2
    const choked = ((jet * pSource) / Math.sqrt(rt)) * Math.sqrt(gamma) * (2 / (gamma + 1)) ** ((gamma + 1) / (2 * (gamma - 1)))
    const volume = chamberVolumes(s.wastegate).topM3 + chamberPlumbing(s).top.lineVolumeM3
    const slope = (choked * rt) / volume
    const critical = pSource * (2 / (gamma + 1)) ** (gamma / (gamma - 1))

    const t = r.series.timeS
    const inWindow = t.flatMap((time, i) => (time > 0.05 && time < 1.5 && r.series.liftM[i] === 0 ? [i] : []))
    expect(inWindow.length).toBeGreaterThan(1000)
    for (const i of inWindow) {
      const p = s.ambient.pressurePa + r.series.topPa[i]!
      expect(p).toBeLessThan(critical)
      // The line, port and jet in series take a few parts in 10⁵ off the jet's area: 0.1 % covers them.
      expect(Math.abs((p - s.ambient.pressurePa) / (slope * t[i]!) - 1), `at ${t[i]} s`).toBeLessThan(0.001)
    }
  })
})
