import { parseArgs } from 'node:util'
import type { UnitSystem } from '../units.ts'

export const COMMANDS = ['balance', 'pull', 'sweep'] as const
export type Command = (typeof COMMANDS)[number]

export interface CliOptions {
  command: Command
  file: string
  json: boolean
  units: UnitSystem
}

export type ArgsResult = { ok: true; options: CliOptions } | { ok: true; help: true } | { ok: false; message: string }

export const USAGE = `Usage: npm run sim -- <balance|pull|sweep> <file> [--json] [--units us|metric]

  balance <scenario.json>   static force balance: areas, spring, crack and full-open boost,
                            forces at crack, and crack boost over drive-to-boost ratios 1.0 to 2.0
  pull <scenario.json>      one dynamic wide-open-throttle pull: metrics, flags and solver statistics
  sweep <sweep.json>        every point of a sweep file { scenario, axes, level }

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
        help: { type: 'boolean', short: 'h', default: false },
      },
    })
  } catch (error) {
    return { ok: false, message: error instanceof Error ? error.message : String(error) }
  }
  const { values, positionals } = parsed
  if (values.help) return { ok: true, help: true }
  const [command, file, ...extra] = positionals
  if (command === undefined) return { ok: false, message: 'a command is required: balance, pull or sweep' }
  if (!(COMMANDS as readonly string[]).includes(command)) {
    return { ok: false, message: `unknown command "${command}": use balance, pull or sweep` }
  }
  if (file === undefined) return { ok: false, message: `"${command}" needs a file to read` }
  if (extra.length > 0) return { ok: false, message: `unexpected argument "${extra[0]}"` }
  if (values.units !== 'us' && values.units !== 'metric') {
    return { ok: false, message: `--units must be "us" or "metric", not "${values.units}"` }
  }
  return { ok: true, options: { command: command as Command, file, json: values.json, units: values.units } }
}
