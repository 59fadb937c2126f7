import { availableParallelism } from 'node:os'
import { ScriptError } from '../lib/script-error.ts'
import { gridShape } from './stats.ts'

export const FIGURES = ['end-to-end', 'workers', 'surface'] as const
export type Figure = (typeof FIGURES)[number]

export interface BenchOptions {
  /** Points of the dynamic sweep of figure 1 (end to end against the bare loop). */
  points: number
  /** Points of the dynamic sweeps of figure 2 (one worker process against two). */
  scalingPoints: number
  /** Timed repeats of each measurement; the figures are their medians. */
  repeats: number
  /** Requests of the surface query (figure 3), and as many of each baseline. */
  surfaceRequests: number
  /** Job slots of the one worker process of figure 1: each computes points in a thread of its own. */
  concurrency: number
  /** Points per chunk of a dynamic sweep (the API's SWEEP_DYNAMIC_CHUNK_SIZE); undefined keeps the API's default. */
  chunkSize: number | undefined
  /** How often the sweep's state is polled to see it finish. */
  pollMs: number
  figures: readonly Figure[]
  quick: boolean
  help: boolean
  /** Ports of the benchmark's own throwaway PostgreSQL and Redis. */
  pgPort: number
  redisPort: number
}

/** Distinct from npm start (55432, 56379) and npm test (55442, 56389), so all three can run at once. */
export const BENCH_PORTS = { postgres: 55452, redis: 56399 } as const

const DEFAULTS = { points: 10_000, scalingPoints: 2_000, repeats: 3, surfaceRequests: 200, pollMs: 250 } as const
/** A short run that still goes through every part, for checking the benchmark itself. */
const QUICK = { points: 200, scalingPoints: 200, repeats: 3, surfaceRequests: 50 } as const

export const USAGE = `npm run bench:sweep -- [options]

  --points N           dynamic points of the end-to-end sweep (default ${DEFAULTS.points}; a product of two numbers up to 1000)
  --scaling-points N   dynamic points of each sweep of the one-against-two-workers figure (default ${DEFAULTS.scalingPoints})
  --repeats N          timed repeats of each measurement; figures are medians (default ${DEFAULTS.repeats})
  --surface-requests N surface requests, and as many of each baseline (default ${DEFAULTS.surfaceRequests})
  --concurrency N      job slots (threads) of the worker in the end-to-end figure (default: the number of cores)
  --chunk-size N       points per dynamic chunk (the API's SWEEP_DYNAMIC_CHUNK_SIZE; default: the API's default)
  --poll-ms N          how often the sweep's state is read to see it finish (default ${DEFAULTS.pollMs})
  --only LIST          some of ${FIGURES.join(', ')} (comma-separated)
  --quick              a short run: ${QUICK.points} points, ${QUICK.scalingPoints} scaling points, ${QUICK.surfaceRequests} surface requests
  --help               this text

Environment: CRACKPOINT_BENCH_PG_PORT (default ${BENCH_PORTS.postgres}), CRACKPOINT_BENCH_REDIS_PORT (default ${BENCH_PORTS.redis}).`

const NUMBER_OPTIONS = {
  '--points': { key: 'points', min: 1, max: 1_000_000 },
  '--scaling-points': { key: 'scalingPoints', min: 1, max: 1_000_000 },
  '--repeats': { key: 'repeats', min: 1, max: 100 },
  '--surface-requests': { key: 'surfaceRequests', min: 1, max: 100_000 },
  '--concurrency': { key: 'concurrency', min: 1, max: 256 },
  '--chunk-size': { key: 'chunkSize', min: 1, max: 10_000 },
  '--poll-ms': { key: 'pollMs', min: 10, max: 10_000 },
} as const
type NumberKey = (typeof NUMBER_OPTIONS)[keyof typeof NUMBER_OPTIONS]['key']

function wholeNumber(name: string, text: string | undefined, min: number, max: number): number {
  if (text === undefined || !/^\d+$/.test(text.trim())) {
    throw new ScriptError(`${name} needs a whole number from ${min} to ${max}${text === undefined ? '' : ` (got "${text}")`}.`)
  }
  const value = Number(text.trim())
  if (value < min || value > max) throw new ScriptError(`${name} must be from ${min} to ${max} (got ${value}).`)
  return value
}

function envPort(env: NodeJS.ProcessEnv, name: string, fallback: number): number {
  const text = env[name]
  if (text === undefined || text.trim() === '') return fallback
  return wholeNumber(name, text, 1, 65_535)
}

/** Reads the command line (`--name value` or `--name=value`) and the port settings; a bad option names itself. */
export function parseBenchArgs(argv: readonly string[], env: NodeJS.ProcessEnv = {}, cores = availableParallelism()): BenchOptions {
  const given: Partial<Record<NumberKey, number>> = {}
  let figures: Figure[] = [...FIGURES]
  let quick = false
  let help = false
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!
    const eq = arg.indexOf('=')
    const name = eq >= 0 ? arg.slice(0, eq) : arg
    const inline = eq >= 0 ? arg.slice(eq + 1) : undefined
    if (name === '--quick' || name === '--help') {
      if (inline !== undefined) throw new ScriptError(`${name} takes no value.`)
      if (name === '--quick') quick = true
      else help = true
      continue
    }
    const takeValue = () => {
      if (inline !== undefined) return inline
      const next = argv[i + 1]
      if (next === undefined || next.startsWith('--')) return undefined
      i += 1
      return next
    }
    if (name === '--only') {
      const list = takeValue()
      if (list === undefined || list.trim() === '') throw new ScriptError(`--only needs a list of ${FIGURES.join(', ')}.`)
      const names = list.split(',').map((n) => n.trim()).filter((n) => n !== '')
      const unknown = names.filter((n) => !(FIGURES as readonly string[]).includes(n))
      if (unknown.length > 0) throw new ScriptError(`--only: no figure named ${unknown.join(', ')}; figures: ${FIGURES.join(', ')}.`)
      figures = FIGURES.filter((f) => names.includes(f))
      continue
    }
    const spec = (NUMBER_OPTIONS as Record<string, (typeof NUMBER_OPTIONS)[keyof typeof NUMBER_OPTIONS]>)[name]
    if (!spec) throw new ScriptError(`Unknown option ${arg}.\n\n${USAGE}`)
    given[spec.key] = wholeNumber(name, takeValue(), spec.min, spec.max)
  }

  const base = quick ? { ...DEFAULTS, ...QUICK } : DEFAULTS
  const options: BenchOptions = {
    points: given.points ?? base.points,
    scalingPoints: given.scalingPoints ?? base.scalingPoints,
    repeats: given.repeats ?? base.repeats,
    surfaceRequests: given.surfaceRequests ?? base.surfaceRequests,
    concurrency: given.concurrency ?? cores,
    chunkSize: given.chunkSize,
    pollMs: given.pollMs ?? base.pollMs,
    figures,
    quick,
    help,
    pgPort: envPort(env, 'CRACKPOINT_BENCH_PG_PORT', BENCH_PORTS.postgres),
    redisPort: envPort(env, 'CRACKPOINT_BENCH_REDIS_PORT', BENCH_PORTS.redis),
  }
  for (const [name, points] of [
    ['--points', options.points],
    ['--scaling-points', options.scalingPoints],
  ] as const) {
    if (!gridShape(points)) {
      throw new ScriptError(`${name} ${points} is not a product of two numbers up to 1000 (a sweep axis takes at most 1000 values).`)
    }
  }
  if (options.pgPort === options.redisPort) {
    throw new ScriptError(`CRACKPOINT_BENCH_PG_PORT and CRACKPOINT_BENCH_REDIS_PORT are both ${options.pgPort}; each service needs its own port.`)
  }
  return options
}
