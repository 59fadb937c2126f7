import { availableParallelism, cpus, loadavg } from 'node:os'
import { setTimeout as sleep } from 'node:timers/promises'
import { resolveAxes, type ResolvedAxis, type Scenario } from '@crackpoint/sim-core'
import { runMain } from '../lib/run-main.ts'
import { ScriptError } from '../lib/script-error.ts'
import { BenchClient, type AxisInput } from './api-client.ts'
import { bareLoopHere, BareThreads } from './bare-loop.ts'
import { cpuBreakdown, formatBreakdown, takeCpuSnapshot, type CpuShare } from './cpu-usage.ts'
import { parseBenchArgs, USAGE, type BenchOptions } from './options.ts'
import { grantQuota, startStack, type BenchStack } from './stack.ts'
import {
  formatMs,
  formatRate,
  formatRatio,
  gridShape,
  median,
  medianIndex,
  medianRate,
  percentile,
  ratio,
  spreadSample,
} from './stats.ts'

const say = (line: string) => console.log(line)
const note = (line: string) => console.log(`[bench] ${line}`)

/** Far above any run's use: a 100,000-point dynamic sweep costs 100,000 units. */
const BENCH_QUOTA_UNITS = 1_000_000_000
/** The single-thread baseline times this many points spread over the grid (a whole 10,000-point loop takes minutes). */
const SINGLE_THREAD_SAMPLE = 1000
/** A sweep with no new point for this long is stuck (a busy machine still finishes a batch of pulls far sooner). */
const STALL_MS = 300_000

/**
 * Seat force × drive-to-boost ratio around the default scenario (129 N, 1.5): every point cracks and
 * settles, so each is a whole pull of ordinary length.
 */
function dynamicAxes(points: number): AxisInput[] {
  const shape = gridShape(points)
  if (!shape) throw new ScriptError(`${points} points are not a grid of two axes up to 1000 values each.`)
  return [
    { path: 'springs.0.seatForceN', range: { from: 100, to: 160, count: shape.rows } },
    { path: 'exhaust.ratio', range: { from: 1.2, to: 1.8, count: shape.columns } },
  ]
}

function resolved(scenario: Scenario, axes: AxisInput[]): ResolvedAxis[] {
  const result = resolveAxes(scenario, axes)
  if (!result.ok) throw new ScriptError(`The benchmark's axes do not fit the scenario: ${JSON.stringify(result.issues)}`)
  return result.axes
}

/** CPU seconds of the named rows of a breakdown. */
function secondsOf(rows: readonly CpuShare[], names: readonly string[]): number {
  return rows.filter((row) => names.includes(row.name)).reduce((sum, row) => sum + row.seconds, 0)
}

interface SweepRun {
  id: string
  seconds: number
  /** From the database's own timestamps: creation to the first chunk taken, and to the last point written. */
  queuedS: number
  computingS: number
  failed: number
  chunkSize: number
}

/**
 * One sweep through the whole product: created over HTTP, chunks through Redis to the workers, points
 * into PostgreSQL, then the surface read back. The clock stops when the surface holds every point.
 */
async function runSweep(
  stack: BenchStack,
  client: BenchClient,
  scenarioId: string,
  level: 'static' | 'dynamic',
  axes: AxisInput[],
  pollMs: number,
): Promise<SweepRun> {
  const t0 = performance.now()
  const created = await client.createSweep(scenarioId, level, axes)
  let sweep = created
  let progressAt = performance.now()
  while (sweep.state === 'queued' || sweep.state === 'running') {
    await sleep(pollMs)
    stack.checkAlive()
    const done = sweep.pointsDone
    sweep = await client.sweep(created.id)
    if (sweep.pointsDone !== done) progressAt = performance.now()
    if (performance.now() - progressAt > STALL_MS) {
      throw new ScriptError(`Sweep ${created.id} made no progress for ${STALL_MS / 1000} s (${sweep.pointsDone} of ${sweep.pointCount} points, ${sweep.state}).`)
    }
  }
  if (sweep.state !== 'done') throw new ScriptError(`Sweep ${created.id} ended ${sweep.state}, not done.`)
  const surface = await client.surface(created.id, level === 'static' ? 'crackBoostPa' : 'maxLiftFraction')
  const seconds = (performance.now() - t0) / 1000
  const cells = surface.z.reduce((n, row) => n + row.length, 0)
  if (cells !== sweep.pointCount) throw new ScriptError(`The surface of ${created.id} has ${cells} cells for ${sweep.pointCount} points.`)

  const times = await stack.knex('sweeps').where({ id: created.id }).first<{ queued: number; computing: number; chunk_size: number }>(
    'chunk_size',
    stack.knex.raw('extract(epoch from started_at - created_at)::float8 as queued'),
    stack.knex.raw('extract(epoch from finished_at - started_at)::float8 as computing'),
  )
  return { id: created.id, seconds, queuedS: times?.queued ?? 0, computingS: times?.computing ?? 0, failed: sweep.pointsFailed, chunkSize: times?.chunk_size ?? 0 }
}

/** A small sweep so the workers' point threads are started and compiled before anything is timed. */
async function warmWorkers(stack: BenchStack, client: BenchClient, scenarioId: string, slots: number, pollMs: number): Promise<number> {
  const run = await runSweep(
    stack,
    client,
    scenarioId,
    'dynamic',
    [
      { path: 'springs.0.seatForceN', range: { from: 110, to: 150, count: 4 } },
      { path: 'exhaust.ratio', range: { from: 1.3, to: 1.7, count: 10 * slots } },
    ],
    pollMs,
  )
  return run.seconds
}

interface Figures {
  endToEnd?: { ratio: number; e2e: number; bare: number; bareSingle: number }
  workers?: { ratio: number; one: number; two: number }
  surface?: { p50: number; p95: number; sqlP50: number; meP50: number }
}

async function endToEndFigure(stack: BenchStack, client: BenchClient, options: BenchOptions, figures: Figures): Promise<void> {
  const slots = options.concurrency
  const scenario = await client.createScenario('Bench: dynamic sweep')
  const axesInput = dynamicAxes(options.points)
  const axes = resolved(scenario.data, axesInput)
  const shape = gridShape(options.points)!
  const all = Array.from({ length: options.points }, (_, i) => i)
  const sample = spreadSample(options.points, SINGLE_THREAD_SAMPLE)

  say('')
  say(`1. Dynamic sweep end to end: ${options.points} points (${shape.rows} seat forces × ${shape.columns} ratios), one worker process with ${slots} job slot(s), ${options.repeats} repeat(s)`)
  const workers = stack.startWorkers(1, slots)
  // More threads than cores run no faster; the fair baseline is the most threads the machine runs at once.
  const bareCount = Math.min(slots, availableParallelism())
  const threads = await BareThreads.start(bareCount)
  try {
    note('warming the bare loop and the worker')
    await threads.run(scenario.data, axes, spreadSample(options.points, 8 * bareCount))
    bareLoopHere(scenario.data, axes, spreadSample(options.points, 10))
    const warmS = await warmWorkers(stack, client, scenario.id, slots, options.pollMs)
    note(`first sweep on a fresh worker (${40 * slots} points, thread start-up included): ${warmS.toFixed(1)} s`)

    const bare: number[] = []
    const single: number[] = []
    const e2e: SweepRun[] = []
    const cpu: CpuShare[][] = []
    const bareCpu: CpuShare[][] = []
    const services = { 'worker processes': workers.pids, PostgreSQL: stack.pids.postgres, API: stack.pids.api, Redis: stack.pids.redis }
    const groups = { ...services, 'this benchmark': [process.pid] }
    // The idle services are counted apart, so the bare loop's row is the bare loop alone.
    const bareGroups = { ...services, 'bare loop threads': [process.pid] }
    for (let r = 0; r < options.repeats; r++) {
      // Interleaved, so a change in the machine's load during the run falls on baseline and product alike.
      let before = takeCpuSnapshot()
      bare.push(await threads.run(scenario.data, axes, all))
      bareCpu.push(cpuBreakdown(before, takeCpuSnapshot(), bareGroups))
      before = takeCpuSnapshot()
      const run = await runSweep(stack, client, scenario.id, 'dynamic', axesInput, options.pollMs)
      cpu.push(cpuBreakdown(before, takeCpuSnapshot(), groups))
      e2e.push(run)
      single.push(bareLoopHere(scenario.data, axes, sample))
      note(`repeat ${r + 1}: bare ${bareCount} thread(s) ${bare[r]!.toFixed(1)} s, end to end ${run.seconds.toFixed(1)} s, bare 1 thread ${single[r]!.toFixed(1)} s for ${sample.length} points`)
    }

    const bareRate = medianRate(options.points, bare)
    const singleRate = medianRate(sample.length, single)
    const e2eRate = medianRate(options.points, e2e.map((run) => run.seconds))
    const mid = medianIndex(e2e.map((run) => run.seconds))
    const m = e2e[mid]!
    const fair = ratio(e2eRate, bareRate)
    figures.endToEnd = { ratio: fair, e2e: e2eRate, bare: bareRate, bareSingle: singleRate }
    say(`   bare sim-core loop, 1 thread:          ${formatRate(singleRate)} (${sample.length} of the points, spread over the grid)`)
    say(`   bare sim-core loop, ${bareCount} thread(s):        ${formatRate(bareRate)}   ← the baseline: as many threads as the worker computes points in, up to one a core`)
    say(`   end to end (API → queue → worker → PostgreSQL → surface ready): ${formatRate(e2eRate)}`)
    say(`   ratio, end to end / bare ${bareCount} thread(s): ${formatRatio(fair)} (aim ≥ 0.85); against 1 thread: ${formatRatio(ratio(e2eRate, singleRate))}`)
    say(`   median repeat (chunks of ${m.chunkSize} points): ${m.queuedS.toFixed(2)} s from creation to the first chunk taken, ${m.computingS.toFixed(1)} s computing and writing, ${(m.seconds - m.queuedS - m.computingS).toFixed(2)} s from the last point to the surface in hand; ${m.failed} point(s) failed`)
    say(`   CPU during that sweep (of ${availableParallelism()} cores × wall time): ${formatBreakdown(cpu[mid]!)}`)
    say(`   CPU during the bare loop of that repeat: ${formatBreakdown(bareCpu[mid]!)}`)
    // Other programs' load moves wall time, not the CPU time a point costs: this ratio holds on a busy machine.
    const productCpu = cpu.map((rows) => secondsOf(rows, ['worker processes', 'PostgreSQL', 'API', 'Redis']))
    const bareCpuS = bareCpu.map((rows) => secondsOf(rows, ['bare loop threads']))
    const perPoint = (seconds: number[]) => (median(seconds) / options.points) * 1000
    const workerMs = perPoint(cpu.map((rows) => secondsOf(rows, ['worker processes'])))
    const serviceMs = perPoint(cpu.map((rows) => secondsOf(rows, ['PostgreSQL', 'API', 'Redis'])))
    say(
      `   CPU time a point costs: bare ${perPoint(bareCpuS).toFixed(2)} ms; end to end ${perPoint(productCpu).toFixed(2)} ms ` +
        `(worker ${workerMs.toFixed(2)}, PostgreSQL + API + Redis ${serviceMs.toFixed(2)}); ratio bare / end to end ${formatRatio(ratio(median(bareCpuS), median(productCpu)))} (1 = no overhead; not moved by other programs' load)`,
    )
  } finally {
    await threads.close()
    await workers.stop()
  }
}

async function workersFigure(stack: BenchStack, client: BenchClient, options: BenchOptions, figures: Figures): Promise<void> {
  const scenario = await client.createScenario('Bench: worker scaling')
  const axesInput = dynamicAxes(options.scalingPoints)
  say('')
  say(`2. Two worker processes against one: ${options.scalingPoints} dynamic points each sweep, one job slot (one point thread) per process, ${options.repeats} repeat(s)`)
  const seconds: Record<1 | 2, number[]> = { 1: [], 2: [] }
  const cpu: Record<1 | 2, CpuShare[][]> = { 1: [], 2: [] }
  for (let r = 0; r < options.repeats; r++) {
    for (const count of [1, 2] as const) {
      const workers = stack.startWorkers(count, 1)
      try {
        await warmWorkers(stack, client, scenario.id, count, options.pollMs)
        const before = takeCpuSnapshot()
        const run = await runSweep(stack, client, scenario.id, 'dynamic', axesInput, options.pollMs)
        cpu[count].push(
          cpuBreakdown(before, takeCpuSnapshot(), { 'worker processes': workers.pids, PostgreSQL: stack.pids.postgres, API: stack.pids.api, Redis: stack.pids.redis }),
        )
        seconds[count].push(run.seconds)
        note(`repeat ${r + 1}: ${count} worker(s) ${run.seconds.toFixed(1)} s`)
      } finally {
        await workers.stop()
      }
    }
  }
  const one = medianRate(options.scalingPoints, seconds[1])
  const two = medianRate(options.scalingPoints, seconds[2])
  const speedup = ratio(two, one)
  figures.workers = { ratio: speedup, one, two }
  const share = (count: 1 | 2, name: string) => cpu[count][medianIndex(seconds[count])]!.find((row) => row.name === name)?.share ?? 0
  const cores = availableParallelism()
  say(`   one worker:  ${formatRate(one)}`)
  say(`   two workers: ${formatRate(two)}`)
  say(`   ratio, two / one: ${formatRatio(speedup)} (aim ≥ 1.7)`)
  say(`   CPU with one worker:  ${formatBreakdown(cpu[1][medianIndex(seconds[1])]!)}`)
  say(`   CPU with two workers: ${formatBreakdown(cpu[2][medianIndex(seconds[2])]!)}`)
  say(
    `   What limits it: ${cores} core(s). The worker processes had ${(share(1, 'worker processes') * cores).toFixed(2)} core(s) with one worker and ` +
      `${(share(2, 'worker processes') * cores).toFixed(2)} with two; PostgreSQL, the API and Redis took ${((share(2, 'PostgreSQL') + share(2, 'API') + share(2, 'Redis')) * 100).toFixed(0)} % ` +
      `of the machine and other programs ${(share(2, 'other programs on the machine') * 100).toFixed(0)} % in the two-worker run, from the same ${cores} cores, so two workers cannot reach 2×${cores <= 2 ? ' here' : ''}.`,
  )
}

async function surfaceFigure(stack: BenchStack, client: BenchClient, options: BenchOptions, figures: Figures): Promise<void> {
  const scenario = await client.createScenario('Bench: surface')
  const axes: AxisInput[] = [
    { path: 'springs.0.seatForceN', range: { from: 60, to: 240, count: 100 } },
    { path: 'exhaust.ratio', range: { from: 1.0, to: 2.0, count: 100 } },
  ]
  say('')
  say(`3. Surface query of a 100 × 100 grid (a static sweep of 10,000 points): ${options.surfaceRequests} requests of each, interleaved`)
  const workers = stack.startWorkers(1, options.concurrency)
  let sweepId: string
  try {
    sweepId = (await runSweep(stack, client, scenario.id, 'static', axes, options.pollMs)).id
  } finally {
    await workers.stop()
  }
  const sql = () =>
    stack.knex('sweep_points').where('sweep_id', sweepId).whereNotNull('crack_boost_pa').select('point_index', stack.knex.raw('crack_boost_pa as value'))
  const timed = async (fn: () => Promise<unknown>) => {
    const t0 = performance.now()
    await fn()
    return performance.now() - t0
  }
  for (let i = 0; i < 10; i++) {
    await client.surface(sweepId, 'crackBoostPa')
    await client.me()
    await sql()
  }
  const surface: number[] = []
  const me: number[] = []
  const plain: number[] = []
  for (let i = 0; i < options.surfaceRequests; i++) {
    surface.push(await timed(() => client.surface(sweepId, 'crackBoostPa')))
    me.push(await timed(() => client.me()))
    plain.push(await timed(() => sql()))
  }
  const p50 = median(surface)
  const p95 = percentile(surface, 95)
  figures.surface = { p50, p95, sqlP50: median(plain), meP50: median(me) }
  say(`   GET /api/sweeps/:id/surface: median ${formatMs(p50)}, 95th percentile ${formatMs(p95)}`)
  say(`   its points query as plain SQL from this process: median ${formatMs(median(plain))}, 95th percentile ${formatMs(percentile(plain, 95))}`)
  say(`   GET /api/me (the lightest signed-in route): median ${formatMs(median(me))}, 95th percentile ${formatMs(percentile(me, 95))}`)
  say(`   ratio, surface / plain SQL: median ${formatRatio(ratio(p50, median(plain)))}, 95th percentile ${formatRatio(ratio(p95, percentile(plain, 95)))}`)
  say(`   ratio, surface / GET /api/me: median ${formatRatio(ratio(p50, median(me)))}, 95th percentile ${formatRatio(ratio(p95, percentile(me, 95)))}`)
}

/**
 * `npm run bench:sweep`: sweeps at scale, through the whole product on its own throwaway services,
 * each figure a ratio against a baseline measured in the same run.
 */
runMain(async () => {
  const options = parseBenchArgs(process.argv.slice(2), process.env)
  if (options.help) {
    say(USAGE)
    return 0
  }
  const cpu = cpus()[0]?.model ?? 'unknown CPU'
  say(`Crackpoint sweep bench — ${new Date().toISOString()}, Node ${process.version}, ${availableParallelism()} core(s) (${cpu}), load average ${loadavg().map((l) => l.toFixed(2)).join(' ')}`)
  say(`Figures are medians of ${options.repeats} repeat(s) and ratios against baselines of the same run; PostgreSQL keeps fsync on.${options.quick ? ' Quick run: the absolute figures are rough.' : ''}`)

  let stack: BenchStack | undefined
  let stopping = false
  const onSignal = (signal: NodeJS.Signals) => {
    if (stopping) return
    stopping = true
    note(`${signal}: stopping the benchmark's services`)
    void (stack?.close() ?? Promise.resolve()).finally(() => process.exit(130))
  }
  process.on('SIGINT', onSignal)
  process.on('SIGTERM', onSignal)

  note(`starting PostgreSQL on ${options.pgPort} and Redis on ${options.redisPort}`)
  stack = await startStack(options, note)
  const figures: Figures = {}
  try {
    const client = new BenchClient(stack.apiUrl)
    await client.register()
    await grantQuota(stack.knex, client.workspaceId, BENCH_QUOTA_UNITS)
    if (options.figures.includes('end-to-end')) await endToEndFigure(stack, client, options, figures)
    if (options.figures.includes('workers')) await workersFigure(stack, client, options, figures)
    if (options.figures.includes('surface')) await surfaceFigure(stack, client, options, figures)
  } finally {
    await stack.close()
  }

  say('')
  say('Summary')
  if (figures.endToEnd) say(`  end to end / bare loop:  ${formatRatio(figures.endToEnd.ratio)} (${formatRate(figures.endToEnd.e2e)} against ${formatRate(figures.endToEnd.bare)})`)
  if (figures.workers) say(`  two workers / one:       ${formatRatio(figures.workers.ratio)} (${formatRate(figures.workers.two)} against ${formatRate(figures.workers.one)})`)
  if (figures.surface) say(`  100 × 100 surface:       median ${formatMs(figures.surface.p50)}, p95 ${formatMs(figures.surface.p95)} (plain SQL median ${formatMs(figures.surface.sqlP50)}, GET /api/me ${formatMs(figures.surface.meP50)})`)
  return 0
})
