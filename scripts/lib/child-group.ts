import { spawn, type ChildProcess } from 'node:child_process'
import { createInterface } from 'node:readline'
import { inspectProcess } from './inspect-process.ts'
import { waitUntil } from './wait-until.ts'

export interface ChildExit {
  name: string
  code: number | null
  signal: NodeJS.Signals | null
}

interface Member {
  name: string
  child: ChildProcess
  exited: boolean
}

/**
 * The long-running programs of `npm start` (API, worker): each one's output is prefixed with its name,
 * the first exit is reported once, and stopAll ends each of them by its own pid.
 */
export class ChildGroup {
  private readonly members: Member[] = []
  private readonly width: number
  private resolveFirstExit: (exit: ChildExit) => void = () => {}
  /** Settles when any child ends, for whatever reason. */
  readonly firstExit: Promise<ChildExit> = new Promise((resolvePromise) => (this.resolveFirstExit = resolvePromise))

  /** `format` rewrites each output line before it is printed (the short form of JSON log lines). */
  constructor(
    names: readonly string[],
    private readonly format: (line: string) => string = (line) => line,
  ) {
    this.width = Math.max(...names.map((n) => n.length))
  }

  spawn(name: string, argv: readonly string[], options: { cwd: string; env: NodeJS.ProcessEnv }): ChildProcess {
    const [program, ...args] = argv
    if (program === undefined) throw new Error('ChildGroup.spawn needs a program')
    const child = spawn(program, args, { cwd: options.cwd, env: options.env, stdio: ['ignore', 'pipe', 'pipe'] })
    const member: Member = { name, child, exited: false }
    this.members.push(member)
    const prefix = `[${name.padEnd(this.width)}] `
    createInterface({ input: child.stdout! }).on('line', (line) => process.stdout.write(prefix + this.format(line) + '\n'))
    createInterface({ input: child.stderr! }).on('line', (line) => process.stderr.write(prefix + this.format(line) + '\n'))
    child.on('error', (error) => {
      process.stderr.write(`${prefix}could not start: ${error.message}\n`)
      member.exited = true
      this.resolveFirstExit({ name, code: null, signal: null })
    })
    child.on('exit', (code, signal) => {
      member.exited = true
      this.resolveFirstExit({ name, code, signal })
    })
    return child
  }

  /** SIGTERM to each child still running, then SIGKILL to any that outlive the grace period. */
  async stopAll(graceMs = 10_000): Promise<void> {
    const running = this.members.filter((m) => !m.exited && m.child.pid !== undefined)
    for (const m of running) m.child.kill('SIGTERM')
    const allGone = () => running.every((m) => m.exited || !inspectProcess(m.child.pid!).alive)
    if (await waitUntil(allGone, { timeoutMs: graceMs, intervalMs: 50 })) return
    for (const m of running) {
      if (!m.exited) {
        process.stderr.write(`[${m.name}] did not stop within ${graceMs / 1000} s; killing it\n`)
        m.child.kill('SIGKILL')
      }
    }
    await waitUntil(allGone, { timeoutMs: 5_000, intervalMs: 50 })
  }
}
