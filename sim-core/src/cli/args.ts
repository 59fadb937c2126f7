import { parseArgs } from 'node:util'
import { SOLVE_TARGETS, SOLVE_UNKNOWNS, type SolveTarget, type SolveUnknown } from '../solve/target-solve.ts'
import { toSI, displayUnits, type UnitSystem } from '../units.ts'

export const COMMANDS = ['balance', 'pull', 'sweep', 'solve'] as const
export type Command = (typeof COMMANDS)[number]

/** What `solve` is asked: the unknown, which boost, the target (Pa gauge) and the ratio band. */
export interface SolveOptions {
  unknown: SolveUnknown
  target: SolveTarget
  targetBoostPa: number
  ratioBand: [number, number] | null
}

export interface CliOptions {
  command: Command
  file: string
  json: boolean
  units: UnitSystem
  solve?: SolveOptions
}

export type ArgsResult = { ok: true; options: CliOptions } | { ok: true; help: true } | { ok: false; message: string }

export const USAGE = `Usage: npm run sim -- <balance|pull|sweep|solve> <file> [--json] [--units us|metric]

  balance <scenario.json>   static force balance: areas, spring, crack and full-open boost,
                            forces at crack, and crack boost over drive-to-boost ratios 1.0 to 2.0
  pull <scenario.json>      one dynamic wide-open-throttle pull: metrics, flags and solver statistics
  sweep <sweep.json>        every point of a sweep file { scenario, axes, level }
  solve <scenario.json> --for seat-force|setpoint|bleed-fraction|duty --target <boost>
        [--at crack|full-open|settled] [--ratio-band 1.4:1.8]
                            the value of one unknown that gives the target boost (read in the
                            --units system: psi for us, kPa for metric); --at picks which boost
                            (default crack; settled runs a few pulls); over a ratio band, the
                            value whose worst end is closest to the target

  --json                    print the result as JSON (SI: Pa gauge for boost, N, m) instead of a table
  --units us|metric         units of the table (default us: psi, in, lbf; metric: kPa, mm, N)
  --help                    this text`

/** Reads the command line; a usage mistake comes back as a message, never as an exception. */
export function parseCliArgs(argv: readonly string[]): ArgsResult {
  let parsed
  try {
    parsed = parseArgs({
      args: [...argv],
      allowPositionals: true,
      strict: true,
      options: {
        json: { type: 'boolean', default: false },
        units: { type: 'string', default: 'us' },
        for: { type: 'string' },
        target: { type: 'string' },
        at: { type: 'string', default: 'crack' },
        'ratio-band': { type: 'string' },
        help: { type: 'boolean', short: 'h', default: false },
      },
    })
  } catch (error) {
    return { ok: false, message: error instanceof Error ? error.message : String(error) }
  }
  const { values, positionals } = parsed
  if (values.help) return { ok: true, help: true }
  const [command, file, ...extra] = positionals
  if (command === undefined) return { ok: false, message: 'a command is required: balance, pull, sweep or solve' }
  if (!(COMMANDS as readonly string[]).includes(command)) {
    return { ok: false, message: `unknown command "${command}": use balance, pull, sweep or solve` }
  }
  if (file === undefined) return { ok: false, message: `"${command}" needs a file to read` }
  if (extra.length > 0) return { ok: false, message: `unexpected argument "${extra[0]}"` }
  if (values.units !== 'us' && values.units !== 'metric') {
    return { ok: false, message: `--units must be "us" or "metric", not "${values.units}"` }
  }
  const options: CliOptions = { command: command as Command, file, json: values.json, units: values.units }
  if (command !== 'solve') {
    const stray = (['for', 'target', 'ratio-band'] as const).find((k) => values[k] !== undefined)
    if (stray) return { ok: false, message: `--${stray} belongs to "solve", not "${command}"` }
    return { ok: true, options }
  }
  const solve = solveOptions(values, values.units)
  if (typeof solve === 'string') return { ok: false, message: solve }
  return { ok: true, options: { ...options, solve } }
}

/** The options of `solve`, or what is wrong with them. */
function solveOptions(
  values: { for?: string | undefined; target?: string | undefined; at?: string | undefined; 'ratio-band'?: string | undefined },
  system: UnitSystem,
): SolveOptions | string {
  const unknown = values.for
  if (unknown === undefined) return `"solve" needs --for, one of ${SOLVE_UNKNOWNS.join(', ')}`
  if (!(SOLVE_UNKNOWNS as readonly string[]).includes(unknown)) return `--for must be one of ${SOLVE_UNKNOWNS.join(', ')}, not "${unknown}"`
  const at = values.at ?? 'crack'
  if (!(SOLVE_TARGETS as readonly string[]).includes(at)) return `--at must be one of ${SOLVE_TARGETS.join(', ')}, not "${at}"`
  if (values.target === undefined) return `"solve" needs --target, the boost wanted in ${displayUnits[system].pressure.symbol}`
  const target = Number(values.target)
  if (!(Number.isFinite(target) && target > 0)) return `--target must be a boost above 0 in ${displayUnits[system].pressure.symbol}, not "${values.target}"`
  let ratioBand: [number, number] | null = null
  if (values['ratio-band'] !== undefined) {
    const parts = values['ratio-band'].split(':').map(Number)
    if (parts.length !== 2 || !parts.every((v) => Number.isFinite(v) && v > 0) || parts[1]! < parts[0]!) {
      return `--ratio-band must be two ratios, low:high (e.g. 1.4:1.8), not "${values['ratio-band']}"`
    }
    ratioBand = [parts[0]!, parts[1]!]
  }
  return {
    unknown: unknown as SolveUnknown,
    target: at as SolveTarget,
    targetBoostPa: toSI(displayUnits[system].pressure, target),
    ratioBand,
  }
}
