import { describe, expect, it } from 'vitest'
import {
  AIR,
  buildPullModel,
  defaultScenario,
  exhaustGas,
  initialShaftSpeedRadS,
  integrateHybrid,
  type PullMode,
  type PullOutputs,
  type Scenario,
} from '../../src/index.ts'

/**
 * Conservation over a whole pull (MODEL.md §4b, checks): what the model's flows and powers add up to over time must
 * equal what its states hold at the end, or mass and energy are made or lost somewhere between the two.
 * - Intake manifold: the mass it holds, p·V/(R·T), changes by the compressor's flow less the engine's.
 * - Exhaust manifold (turbine mode): p·V/(R_e·T_em) changes by the exhaust flow less the turbine's and the gates'.
 * - Shaft: ½·J·ω² changes by the turbine's power less the compressor's and friction's.
 * Integrated from the model's own outputs at 1 ms by the trapezoid rule; each balance must close to 1e-4 of what
 * passed through it.
 */

interface Sampled {
  t: number[]
  o: PullOutputs[]
  y: number[][]
}

function sampled(s: Scenario): { run: Sampled; layout: ReturnType<typeof buildPullModel>['layout'] } {
  const model = buildPullModel(s)
  const start = model.initialState(initialShaftSpeedRadS(s))
  const run: Sampled = { t: [], o: [], y: [] }
  const result = integrateHybrid<PullMode>(model.system, {
    startS: 0,
    endS: s.engine.pullDurationS,
    y0: start.y,
    mode0: start.mode,
    sampleIntervalS: 0.001,
    relativeTolerance: 1e-8,
    absoluteTolerance: model.absoluteTolerance.map((a) => a * 1e-2),
    maxStepS: s.solver.maxStepS,
    maxSteps: 200_000,
    maxRestarts: s.solver.maxEvents,
    integrator: { kind: 'odex' },
    onSample: (t, y, mode) => {
      run.t.push(t)
      run.o.push(model.outputs(t, y, mode))
      run.y.push([...y])
    },
  })
  expect(result.stats.outcome).toBe('converged')
  return { run, layout: model.layout }
}

/** ∫ f dt over the samples, trapezoid rule. */
function integral(run: Sampled, f: (o: PullOutputs) => number): number {
  let sum = 0
  for (let i = 1; i < run.t.length; i++) sum += 0.5 * (run.t[i]! - run.t[i - 1]!) * (f(run.o[i]!) + f(run.o[i - 1]!))
  return sum
}

const base = defaultScenario()
const turbineMode: Scenario = { ...base, exhaust: { ...base.exhaust, mode: 'turbine', turbineAreaM2: 5e-4 } }

describe('conservation over a pull', () => {
  for (const [name, s] of [['ratio mode', base], ['turbine mode', turbineMode]] as const) {
    describe(name, () => {
      const { run, layout } = sampled(s)
      const first = run.y[0]!
      const last = run.y.at(-1)!

      it('the intake manifold holds what the compressor delivered less what the engine took', () => {
        const stored = ((last[layout.intake]! - first[layout.intake]!) * s.engine.intakeVolumeM3) / (AIR.gasConstant * s.engine.chargeTemperatureK)
        const net = integral(run, (o) => o.compressorFlowKgS - o.engineFlowKgS)
        const through = integral(run, (o) => o.compressorFlowKgS)
        expect(stored).toBeGreaterThan(0)
        expect(Math.abs(stored - net) / through).toBeLessThan(1e-4)
      })

      it('the shaft’s kinetic energy grows by the turbine’s work less the compressor’s and friction’s', () => {
        const omega0 = first[layout.omega]!
        const omega1 = last[layout.omega]!
        const kinetic = 0.5 * s.turbo.inertiaKgM2 * (omega1 * omega1 - omega0 * omega0)
        const net = integral(run, (o) => o.turbinePowerW - o.compressorPowerW - o.frictionPowerW)
        const turbineWork = integral(run, (o) => o.turbinePowerW)
        expect(turbineWork).toBeGreaterThan(0)
        expect(Math.abs(kinetic - net) / turbineWork).toBeLessThan(1e-4)
      })

      if (s.exhaust.mode === 'turbine') {
        it('the exhaust manifold holds what the engine sent less what the turbine and the gate passed', () => {
          const gas = exhaustGas(s.exhaust)
          const stored = ((last[layout.exhaust]! - first[layout.exhaust]!) * s.engine.exhaustVolumeM3) / (gas.gasConstant * s.engine.exhaustTemperatureK)
          const net = integral(run, (o) => o.exhaustFlowKgS - o.turbineFlowKgS - o.wastegateFlowKgS)
          const through = integral(run, (o) => o.exhaustFlowKgS)
          expect(Math.abs(stored - net) / through).toBeLessThan(1e-4)
        })
      }
    })
  }
})
