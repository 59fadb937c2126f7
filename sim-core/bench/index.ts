/**
 * `npm run bench -w @crackpoint/sim-core`: the speed of the static balance and of the dynamic pull, from one run.
 * Timings are medians of repeats, in CPU time of this process (what one core delivers) and in wall time.
 */
import { computeBalance, defaultScenario, runPull, type PullResult, type RunPullOptions, type Scenario } from '../src/index.ts'

interface Timing {
  cpuS: number
  wallS: number
  /** The fastest repeat's CPU time: what the code does when no other process competes for the core. */
  bestCpuS: number
}

/** Median time of one call of `fn`, from `repeats` batches of `batch` calls each. */
function medianTime(fn: () => void, batch: number, repeats: number): Timing {
  const cpu: number[] = []
  const wall: number[] = []
  for (let r = 0; r < repeats; r++) {
    const c0 = process.cpuUsage()
    const w0 = performance.now()
    for (let i = 0; i < batch; i++) fn()
    const c = process.cpuUsage(c0)
    wall.push((performance.now() - w0) / 1000 / batch)
    cpu.push((c.user + c.system) / 1e6 / batch)
  }
  const median = (v: number[]) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)]!
  return { cpuS: median(cpu), wallS: median(wall), bestCpuS: Math.min(...cpu) }
}

const perSecond = (t: Timing) =>
  `${(1 / t.cpuS).toFixed(0)}/s per core, median (fastest repeat ${(1 / t.bestCpuS).toFixed(0)}/s; wall ${(1 / t.wallS).toFixed(0)}/s)`

/** Largest deviation from the reference over the sampled boost and lift, each over its scale (p_amb, full lift). */
function deviation(s: Scenario, r: PullResult, ref: PullResult): number {
  let worst = 0
  for (let i = 0; i < ref.series.timeS.length; i++) {
    worst = Math.max(
      worst,
      Math.abs(r.series.boostPa[i]! - ref.series.boostPa[i]!) / s.ambient.pressurePa,
      Math.abs(r.series.liftM[i]! - ref.series.liftM[i]!) / s.wastegate.maxLiftM,
    )
  }
  return worst
}

const s = defaultScenario()
const say = (line: string) => console.log(line)

say(`Crackpoint sim-core bench — Node ${process.version}, default scenario (${s.engine.pullDurationS} s pull, ${s.solver.sampleIntervalS * 1000} ms samples, rtol ${s.solver.relativeTolerance})`)
say('Times are CPU time of this process (other processes on the machine slow it too: compare the fastest repeat).')

// Static balance: a spring sweep's worth of distinct scenarios, each balanced in full (crack, full open, ratio range).
const springs = Array.from({ length: 1000 }, (_, i) => ({ ...s, springs: [{ from: 'seat' as const, seatForceN: 80 + i * 0.1, rateNPerM: 3500 }] }))
let k = 0
medianTime(() => computeBalance(springs[k++ % springs.length]!), 2000, 2)
const staticTime = medianTime(() => computeBalance(springs[k++ % springs.length]!), 20_000, 7)
say(`static balance points:   ${perSecond(staticTime)}`)

// Dynamic pulls with odex.
for (let i = 0; i < 20; i++) runPull(s)
const odexPull = runPull(s)
const odexTime = medianTime(() => runPull(s), 20, 9)
const st = odexPull.stats
say(`dynamic pulls (odex):    ${perSecond(odexTime)}`)
say(`  per pull: ${st.evaluations} evaluations, ${st.steps} steps (${st.rejected} rejected), ${st.restarts} restarts, ${st.auxiliaryEvaluations} guard checks and sampled outputs`)
say(`  ${(st.evaluations / st.steps).toFixed(1)} evaluations per step; ${((odexTime.cpuS / st.evaluations) * 1e9).toFixed(0)} ns of the pull per evaluation, solver overhead included`)

// The session a supply plans for (scenario.ts defaults); it does not enter a pull.
const SESSION = { sessionPulls: 10, sessionArmedS: 1800, ventAfterEachPull: false }

// The top port on a CO₂ bottle above its critical temperature: the bottle's pressure is evaluated in every step.
const hotBottle: Scenario = {
  ...s,
  control: { kind: 'top-supply' },
  supply: { kind: 'co2', regulatorSetpointPa: 68_948, regulatorDroopPa: 20_000, bottleVolumeM3: 0.0046, fillMassKg: 2.27, bottleTemperatureK: 318.15, ...SESSION },
}
for (let i = 0; i < 10; i++) runPull(hotBottle)
const hotTime = medianTime(() => runPull(hotBottle), 10, 9)
say(`dynamic pulls, top port on a CO₂ bottle at 45 °C (10 psi): ${perSecond(hotTime)}, ${runPull(hotBottle).stats.evaluations} evaluations`)

// Fixed-step RK4 of the same accuracy, against a converged reference (RK4 at 25 µs).
const reference = runPull(s, { integrator: { kind: 'rk4', stepS: 2.5e-5 } })
const odexError = deviation(s, odexPull, reference)
let chosen: { stepS: number; error: number; evaluations: number } | null = null
for (const stepS of [4e-3, 3e-3, 2.5e-3, 2e-3, 1.5e-3, 1e-3, 5e-4, 2.5e-4]) {
  const r = runPull(s, { integrator: { kind: 'rk4', stepS } })
  const error = deviation(s, r, reference)
  if (r.stats.outcome === 'converged' && error <= odexError) {
    chosen = { stepS, error, evaluations: r.stats.evaluations }
    break
  }
}
say(`odex deviation from the reference: ${odexError.toExponential(2)} (largest of boost/p_amb and lift/full lift)`)
if (chosen) {
  const options: RunPullOptions = { integrator: { kind: 'rk4', stepS: chosen.stepS } }
  for (let i = 0; i < 5; i++) runPull(s, options)
  const rk4Time = medianTime(() => runPull(s, options), 10, 7)
  say(`RK4 of equal accuracy:   step ${chosen.stepS * 1000} ms (deviation ${chosen.error.toExponential(2)}), ${chosen.evaluations} evaluations, ${perSecond(rk4Time)}`)
  say(`  odex is ${(rk4Time.cpuS / odexTime.cpuS).toFixed(2)}× the speed of that RK4 (CPU time per pull, RK4 over odex)`)
} else {
  say('RK4 of equal accuracy: none of the steps tried reached the odex deviation')
}
