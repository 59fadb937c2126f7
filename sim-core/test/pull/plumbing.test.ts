import { describe, expect, it } from 'vitest'
import { chamberPlumbing, parseScenario, pipedPorts, defaultScenario } from '../../src/index.ts'

/** The ports a form shows lines for are the ports the model pipes, for every arrangement. */
describe('pipedPorts', () => {
  const controls = [
    { kind: 'none' },
    { kind: 'bottom-boost' },
    { kind: 'top-supply' },
    { kind: 'both' },
    { kind: 'bleed-top', fraction: 0.3, bottomOnBoost: true },
    { kind: 'bleed-top', fraction: 0.3, bottomOnBoost: false },
    { kind: 'solenoid-3port', chamber: 'bottom', duty: 0.4 },
    { kind: 'solenoid-3port', chamber: 'top', duty: 0.4 },
    { kind: 'solenoid-4port', duty: 0.4 },
    { kind: 'closed-loop', targetBoostPa: 80_000 },
  ] as const

  it('says a port is piped exactly where chamberPlumbing gives it a hose', () => {
    for (const control of controls) {
      const parsed = parseScenario({ ...defaultScenario(), control })
      if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues))
      const plumbing = chamberPlumbing(parsed.scenario)
      expect(pipedPorts(parsed.scenario.control), JSON.stringify(control)).toEqual({
        top: plumbing.top.lineVolumeM3 > 0,
        bottom: plumbing.bottom.lineVolumeM3 > 0,
      })
    }
  })
})
