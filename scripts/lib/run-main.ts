import { ScriptError } from './script-error.ts'

/**
 * Runs a script's body and exits with its code. Expected failures print their message alone;
 * anything else is a bug and keeps its stack.
 */
export function runMain(body: () => Promise<number>): void {
  body().then(
    (code) => {
      process.exitCode = code
    },
    (error: unknown) => {
      console.error(error instanceof ScriptError ? `\n${error.message}` : error)
      process.exitCode = 1
    },
  )
}
