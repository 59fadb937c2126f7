import { basename, resolve } from 'node:path'
import { pathToFileURL } from 'node:url'
import { computeBalance } from './balance.ts'
import type { FieldIssue } from './scenario.ts'
import { parseCliArgs, USAGE, type CliOptions } from './cli/args.ts'
import { renderBalance } from './cli/balance-report.ts'
import { faultLine, refusalLines, refusalOf, SweepPointError } from './cli/failures.ts'
import { readJsonFile, readScenario, readSweep, type SweepFile } from './cli/input.ts'
import { renderPull } from './cli/pull-report.ts'
import { renderSolve } from './cli/solve-report.ts'
import { renderSweep, runSweep } from './cli/sweep-report.ts'
import { runPull } from './pull/index.ts'
import { solveForTarget } from './solve/target-solve.ts'

/**
 * `npm run sim -- <balance|pull|sweep|solve> <file> [--json] [--units us|metric]`: the model from the command line.
 * Exit codes: 0 done (a pull that stopped early says so in its report), 1 bad input (file, schema, or a scenario
 * the model refuses), 2 wrong usage, 70 a fault in the tool. No exit prints a stack trace.
 */

export interface CliIo {
  stdout: (text: string) => void
  stderr: (text: string) => void
  /** Where relative file names start: npm's INIT_CWD (where `npm run` was typed) or the process's own. */
  cwd: string
}

/** Above these a sweep belongs on the job queue of the web app, not in a terminal. */
export const CLI_MAX_STATIC_POINTS = 100_000
export const CLI_MAX_DYNAMIC_POINTS = 1_000

const json = (value: unknown) => JSON.stringify(value, null, 2)

/** Problems with the file itself (missing, not JSON) carry the path "(file)" and need no field name. */
const FILE_ISSUE = '(file)'

function reportIssues(io: CliIo, file: string, what: string, issues: readonly FieldIssue[]): number {
  const fileIssue = issues.find((i) => i.path === FILE_ISSUE)
  if (fileIssue) {
    io.stderr(`${fileIssue.message}\n`)
    return 1
  }
  io.stderr(`${file} is not a valid ${what}:\n${issues.map((i) => `  ${i.path}: ${i.message}`).join('\n')}\n`)
  return 1
}

async function balance(options: CliOptions, path: string, io: CliIo): Promise<number> {
  const read = await readJsonFile(path)
  if (!read.ok) return reportIssues(io, options.file, 'scenario file', read.issues)
  const scenario = readScenario(read.value)
  if (!scenario.ok) return reportIssues(io, options.file, 'scenario', scenario.issues)
  const result = computeBalance(scenario.value)
  io.stdout(options.json ? `${json(result)}\n` : `${renderBalance(basename(path), scenario.value, result, options.units)}\n`)
  return 0
}

async function pull(options: CliOptions, path: string, io: CliIo): Promise<number> {
  const read = await readJsonFile(path)
  if (!read.ok) return reportIssues(io, options.file, 'scenario file', read.issues)
  const scenario = readScenario(read.value)
  if (!scenario.ok) return reportIssues(io, options.file, 'scenario', scenario.issues)
  const result = runPull(scenario.value)
  io.stdout(options.json ? `${json(result)}\n` : `${renderPull(basename(path), scenario.value, result, options.units)}\n`)
  return 0
}

async function solve(options: CliOptions, path: string, io: CliIo): Promise<number> {
  const read = await readJsonFile(path)
  if (!read.ok) return reportIssues(io, options.file, 'scenario file', read.issues)
  const scenario = readScenario(read.value)
  if (!scenario.ok) return reportIssues(io, options.file, 'scenario', scenario.issues)
  const ask = options.solve!
  const result = solveForTarget(scenario.value, {
    unknown: ask.unknown,
    target: ask.target,
    targetBoostPa: ask.targetBoostPa,
    ...(ask.ratioBand === null ? {} : { ratioBand: ask.ratioBand }),
  })
  if (options.json) {
    // SI, with the names the rest of the CLI's JSON uses; the scenario with the answer in is left to `balance`.
    const { scenario: _withAnswer, ...rest } = { scenario: undefined, ...result }
    const named = result.status === 'solved' ? { ...rest, [VALUE_NAMES[ask.unknown]]: result.value } : rest
    io.stdout(`${json(named)}\n`)
  } else {
    io.stdout(`${renderSolve(basename(path), scenario.value, result, options.units)}\n`)
  }
  return 0
}

/** The SI name of each unknown's value in `solve --json`, as scenario fields are named. */
const VALUE_NAMES = { 'seat-force': 'seatForceN', setpoint: 'setpointPa', 'bleed-fraction': 'bleedFraction', duty: 'duty' } as const

async function sweep(options: CliOptions, path: string, io: CliIo): Promise<number> {
  const read = await readJsonFile(path)
  if (!read.ok) return reportIssues(io, options.file, 'sweep file', read.issues)
  const parsed = readSweep(read.value)
  if (!parsed.ok) return reportIssues(io, options.file, 'sweep', parsed.issues)
  const s: SweepFile = parsed.value
  const limit = s.level === 'static' ? CLI_MAX_STATIC_POINTS : CLI_MAX_DYNAMIC_POINTS
  if (s.pointCount > limit) {
    return reportIssues(io, options.file, 'sweep for the command line', [
      { path: 'axes', message: `give ${s.pointCount} points; the command line runs at most ${limit} at the ${s.level} level` },
    ])
  }
  const rows = runSweep(s)
  if (options.json) {
    io.stdout(`${json({ level: s.level, axes: s.axes, pointCount: s.pointCount, points: rows })}\n`)
  } else {
    io.stdout(`${renderSweep(basename(path), s, rows, options.units)}\n`)
  }
  return 0
}

/** Runs one command line; returns the exit code. */
export async function main(argv: readonly string[], io: CliIo): Promise<number> {
  const args = parseCliArgs(argv)
  if (!args.ok) {
    io.stderr(`${args.message}\n\n${USAGE}\n`)
    return 2
  }
  if ('help' in args) {
    io.stdout(`${USAGE}\n`)
    return 0
  }
  const { options } = args
  const path = resolve(io.cwd, options.file)
  try {
    switch (options.command) {
      case 'balance':
        return await balance(options, path, io)
      case 'pull':
        return await pull(options, path, io)
      case 'sweep':
        return await sweep(options, path, io)
      case 'solve':
        return await solve(options, path, io)
    }
  } catch (error) {
    return reportFailure(io, options, error)
  }
}

/** A model refusal is bad input (exit 1, naming the field); anything else is a fault in the tool (exit 70). */
function reportFailure(io: CliIo, options: CliOptions, error: unknown): number {
  const atPoint = error instanceof SweepPointError ? error : null
  const refusal = refusalOf(atPoint ? atPoint.cause : error)
  if (refusal === null) {
    const where = `sim ${options.command} ${options.file}${atPoint ? ` at point ${atPoint.index} (${atPoint.where})` : ''}`
    io.stderr(`${faultLine(where, atPoint ? atPoint.cause : error)}\n`)
    return 70
  }
  if (atPoint) {
    io.stderr(`${options.file}: the model cannot run point ${atPoint.index} of this sweep (${atPoint.where}):\n${refusalLines(refusal, 'scenario.')}\n`)
  } else {
    io.stderr(`${options.file} is not a scenario the model can run:\n${refusalLines(refusal)}\n`)
  }
  return 1
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url === pathToFileURL(resolve(process.argv[1])).href
if (invokedDirectly) {
  const io: CliIo = {
    stdout: (text) => process.stdout.write(text),
    stderr: (text) => process.stderr.write(text),
    cwd: process.env.INIT_CWD ?? process.cwd(),
  }
  main(process.argv.slice(2), io).then(
    (code) => {
      process.exitCode = code
    },
    (error: unknown) => {
      // main catches what the commands throw; this is the last guard, and it keeps to one line too.
      process.stderr.write(`${faultLine('sim', error)}\n`)
      process.exitCode = 70
    },
  )
}
