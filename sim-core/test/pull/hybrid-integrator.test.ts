import { describe, expect, it } from 'vitest'
import { integrateHybrid, type HybridSystem, type IntegratorChoice } from '../../src/pull/hybrid-integrator.ts'
import { expectClose } from '../expect-close.ts'

const OMEGA = 2 * Math.PI * 3 // rad/s
const ZETA = 0.1

/** x'' + 2ζω·x' + ω²·x = 0, no events. */
const damped: HybridSystem<'free'> = {
  size: 2,
  derivative: (_t, y) => [y[1]!, -2 * ZETA * OMEGA * y[1]! - OMEGA * OMEGA * y[0]!],
  guards: () => [],
  onEvent: (_t, y, mode) => ({ y: [...y], mode }),
}

/** x(0) = 1, v(0) = 0: x = e^(−ζωt)·(cos ω_d t + ζω/ω_d·sin ω_d t), ω_d = ω√(1 − ζ²) (closed form of any vibrations text). */
function dampedExact(t: number): number {
  const wd = OMEGA * Math.sqrt(1 - ZETA * ZETA)
  return Math.exp(-ZETA * OMEGA * t) * (Math.cos(wd * t) + ((ZETA * OMEGA) / wd) * Math.sin(wd * t))
}

function run<M>(system: HybridSystem<M>, mode0: M, integrator: IntegratorChoice, rtol: number, endS = 2) {
  const samples: { t: number; x: number }[] = []
  const events: number[] = []
  const result = integrateHybrid(system, {
    startS: 0,
    endS,
    y0: [1, 0],
    mode0,
    sampleIntervalS: 0.01,
    relativeTolerance: rtol,
    absoluteTolerance: [rtol, rtol * OMEGA],
    maxStepS: 0.01,
    maxSteps: 100_000,
    maxRestarts: 100,
    integrator,
    onSample: (t, y) => samples.push({ t, x: y[0]! }),
    onEvent: (t) => events.push(t),
  })
  return { result, samples, events }
}

describe('hybrid integrator on the damped oscillator (closed form)', () => {
  for (const rtol of [1e-6, 1e-9]) {
    it(`follows the closed form within 5·rtol on the dense samples, odex rtol ${rtol}`, () => {
      const { result, samples } = run(damped, 'free' as const, { kind: 'odex' }, rtol)
      expect(result.stats.outcome).toBe('converged')
      expect(samples).toHaveLength(201)
      expectClose(samples[200]!.t, 2, 1e-12, 'last sample time')
      // A tolerance-controlled method's global error over 2 s (six periods) stays near rtol; 5·rtol leaves room.
      for (const s of samples) expectClose(s.x, dampedExact(s.t), 5 * rtol, `x at ${s.t}`)
      expect(result.stats.evaluations).toBeGreaterThan(result.stats.steps)
    })
  }

  it('fixed-step RK4 converges at fourth order', () => {
    const err = (h: number) => {
      const { samples } = run(damped, 'free' as const, { kind: 'rk4', stepS: h }, 1e-6)
      return Math.max(...samples.map((s) => Math.abs(s.x - dampedExact(s.t))))
    }
    const ratio = err(2e-3) / err(1e-3)
    // 2⁴ = 16 for a fourth-order method (the Hermite samples are fourth-order too).
    expect(ratio).toBeGreaterThan(12)
    expect(ratio).toBeLessThan(20)
  })

  it('returns max-steps as an outcome with statistics, not an exception', () => {
    const samples: number[] = []
    const result = integrateHybrid(damped, {
      startS: 0, endS: 2, y0: [1, 0], mode0: 'free', sampleIntervalS: 0.01, relativeTolerance: 1e-8,
      absoluteTolerance: [1e-8, 1e-8], maxStepS: 0.01, maxSteps: 20, maxRestarts: 10, integrator: { kind: 'odex' },
      onSample: (t) => samples.push(t),
    })
    expect(result.stats.outcome).toBe('max-steps')
    expect(result.reachedS).toBeLessThan(2)
    expect(result.stats.steps).toBeGreaterThan(0)
    expect(samples.at(-1)!).toBeLessThanOrEqual(result.reachedS + 1e-12)
  })

  it('names the option that is wrong', () => {
    expect(() =>
      integrateHybrid(damped, {
        startS: 0, endS: 1, y0: [1, 0], mode0: 'free', sampleIntervalS: 0, relativeTolerance: 1e-6,
        absoluteTolerance: [1e-6, 1e-6], maxStepS: 0.01, maxSteps: 100, maxRestarts: 1, integrator: { kind: 'odex' },
        onSample: () => undefined,
      }),
    ).toThrow(/sampleIntervalS/)
  })
})

describe('hybrid integrator with a hard stop (closed form)', () => {
  const RESTITUTION = 0.5
  /** Undamped x'' = −ω²x with a stop at x = 0 that returns the speed times e. */
  const bouncing: HybridSystem<'free'> = {
    size: 2,
    derivative: (_t, y) => [y[1]!, -OMEGA * OMEGA * y[0]!],
    guards: (_t, y) => [-y[0]!],
    onEvent: (_t, y, mode) => ({ y: [0, -RESTITUTION * y[1]!], mode }),
  }

  it('locates each impact and restarts from it', () => {
    const { result, samples, events } = run(bouncing, 'free' as const, { kind: 'odex' }, 1e-9, 0.5)
    // x = cos ωt meets the stop at π/(2ω), then x = e·sin ω(t − t₁) returns to it half a period later.
    const t1 = Math.PI / (2 * OMEGA)
    const t2 = t1 + Math.PI / OMEGA
    expect(events.length).toBeGreaterThanOrEqual(2)
    expectClose(events[0]!, t1, 1e-8, 'first impact, s')
    expectClose(events[1]!, t2, 1e-8, 'second impact, s')
    expect(result.stats.restarts).toBe(events.length)
    for (const s of samples.filter((s) => s.t > t1 && s.t < t2)) {
      expectClose(s.x, RESTITUTION * Math.sin(OMEGA * (s.t - t1)), 1e-7, `x at ${s.t}`)
    }
  })
})
