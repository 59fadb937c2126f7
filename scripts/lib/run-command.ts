import { spawn } from 'node:child_process'
import { ScriptError } from './script-error.ts'

export interface CommandOptions {
  cwd?: string
  env?: NodeJS.ProcessEnv
  /** Return a non-zero exit instead of throwing; the caller reads `code`. */
  allowFailure?: boolean
  timeoutMs?: number
  /** Ends the program (SIGTERM) when aborted, e.g. on Ctrl-C during a build. */
  signal?: AbortSignal
}

export interface CommandResult {
  code: number
  /** stdout and stderr interleaved, as a person would have seen them. */
  output: string
}

/** Runs a program to completion and collects its output; a failure names the program and shows what it said. */
export function runCommand(argv: readonly string[], options: CommandOptions = {}): Promise<CommandResult> {
  const [program, ...args] = argv
  if (program === undefined) throw new Error('runCommand needs a program')
  return new Promise((resolvePromise, reject) => {
    const child = spawn(program, args, {
      cwd: options.cwd,
      env: options.env ?? process.env,
      stdio: ['ignore', 'pipe', 'pipe'],
      signal: options.signal,
    })
    let output = ''
    child.stdout.on('data', (chunk: Buffer) => (output += chunk.toString()))
    child.stderr.on('data', (chunk: Buffer) => (output += chunk.toString()))
    const timer =
      options.timeoutMs === undefined
        ? undefined
        : setTimeout(() => child.kill('SIGKILL'), options.timeoutMs)
    child.on('error', (error: NodeJS.ErrnoException) => {
      clearTimeout(timer)
      if (error.name === 'AbortError') {
        reject(new ScriptError(`${program} was stopped.`))
        return
      }
      reject(
        new ScriptError(
          error.code === 'ENOENT' ? `${program} was not found.` : `Could not run ${program}: ${error.message}`,
        ),
      )
    })
    child.on('close', (code, signal) => {
      clearTimeout(timer)
      const exit = code ?? 128
      if (exit !== 0 && !options.allowFailure) {
        const why = signal ? `was stopped by ${signal}` : `failed with exit code ${exit}`
        reject(new ScriptError(`${argv.join(' ')} ${why}:\n${output.trim()}`))
        return
      }
      resolvePromise({ code: exit, output })
    })
  })
}
