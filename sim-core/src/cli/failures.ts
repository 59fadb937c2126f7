import { scenarioSchema } from '../scenario.ts'

/**
 * What the command line says when the model does not finish. A scenario the schema takes can still be one the
 * model refuses (a RangeError naming the field, e.g. a top chamber smaller than the volume the piston sweeps):
 * that is the user's input to fix, reported like a schema problem with exit 1. Anything else is a fault in the
 * tool, reported in one line with exit 70. Neither prints a stack trace: the user cannot act on one.
 */

/** A model refusal, with the scenario field it names when it names one. */
export interface Refusal {
  path: string | null
  message: string
}

/** A whole-pull failure at one point of a sweep, so the report can say which point. */
export class SweepPointError extends Error {
  override readonly name = 'SweepPointError'
  constructor(
    readonly index: number,
    /** "exhaust.ratio = 1.5, springs.0.seatForceN = 200" */
    readonly where: string,
    override readonly cause: unknown,
  ) {
    super(`point ${index} (${where}): ${cause instanceof Error ? cause.message : String(cause)}`)
  }
}

/**
 * RangeErrors the JavaScript engine raises on its own (recursion, huge arrays or strings, number formatting):
 * they come from a fault in the code, not from a scenario, whatever their class says.
 */
const ENGINE_RANGE_ERRORS = [
  /maximum call stack/i,
  /invalid (array|string|typed array) length/i,
  /digits argument|precision .*out of range|radix/i,
  /invalid (time|count|code point) value/i,
]

const SCENARIO_KEYS = new Set(Object.keys(scenarioSchema.shape))
/** "wastegate.topChamberVolumeM3 must exceed …": a dotted path into the scenario, then what is wrong with it. */
const FIELD_FIRST = /^([A-Za-z_]\w*(?:\.\w+)+)\s+([\s\S]+)$/

/** The refusal in a model error, or null when the error is a fault in the tool. */
export function refusalOf(error: unknown): Refusal | null {
  if (!(error instanceof RangeError)) return null
  if (ENGINE_RANGE_ERRORS.some((pattern) => pattern.test(error.message))) return null
  const match = FIELD_FIRST.exec(error.message)
  if (match && SCENARIO_KEYS.has(match[1]!.split('.')[0]!)) return { path: match[1]!, message: oneLine(match[2]!) }
  return { path: null, message: oneLine(error.message) }
}

/** The lines of a refusal under a heading, in the form of the schema's messages (`path: problem`). */
export function refusalLines(refusal: Refusal, pathPrefix = ''): string {
  if (refusal.path !== null) return `  ${pathPrefix}${refusal.path}: ${refusal.message}`
  // The model named no field: say so, since the cause may be the model's and not the file's.
  return `  ${refusal.message}\n  (the model names no field for this; if the scenario looks right, report it with the file)`
}

/** One line for a fault in the tool: where (e.g. `sim pull f.json`), what broke, never a stack. */
export function faultLine(where: string, error: unknown): string {
  const what = error instanceof Error ? `${error.name}: ${error.message}` : String(error)
  return `${where}: a fault in the tool, not in the file (${oneLine(what)}); please report it with the file`
}

function oneLine(text: string): string {
  return text.replace(/\s*\n\s*/g, ' ').trim()
}
