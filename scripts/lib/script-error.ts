/**
 * An expected failure of a service script: its message is written for the person at the terminal
 * (what went wrong, what to do) and is printed without a stack trace.
 */
export class ScriptError extends Error {
  override readonly name = 'ScriptError'
}
