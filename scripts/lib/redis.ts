import { mkdirSync, rmSync } from 'node:fs'
import { join } from 'node:path'
import type { RedisConfig } from './config.ts'
import { inspectProcess } from './inspect-process.ts'
import { isPortOpen } from './is-port-open.ts'
import { readPidFile } from './read-pid-file.ts'
import { redisPing } from './redis-ping.ts'
import { runCommand } from './run-command.ts'
import { ScriptError } from './script-error.ts'
import type { ServiceStatus, StartOutcome } from './service-status.ts'
import { tailFile } from './tail-file.ts'
import { waitUntil } from './wait-until.ts'

export interface RedisService {
  readonly dir: string
  start(): Promise<StartOutcome>
  /** Stops the server this folder's pid file names, if it is ours and runs; tells whether it stopped one. */
  stop(): Promise<boolean>
  status(): Promise<ServiceStatus>
}

const readyTimeoutMs = 15_000
const stopTimeoutMs = 15_000

/** The Redis server of one data folder, daemonized on loopback with its pid file, log and dump inside it. */
export function createRedis(config: RedisConfig, dataDir: string, say: (line: string) => void = () => {}): RedisService {
  const dir = join(dataDir, 'redis')
  const pidFile = join(dir, 'redis.pid')
  const logFile = join(dir, 'redis.log')
  const withLog = (message: string) => {
    const tail = tailFile(logFile)
    return tail === '' ? message : `${message}\n  Last lines of ${logFile}:\n${tail}`
  }
  const ping = () => redisPing(config.host, config.port)

  function recorded(): { pid: number; ours: boolean; alive: boolean } | null {
    const pid = readPidFile(pidFile)
    if (pid === null) return null
    const info = inspectProcess(pid)
    return { pid, alive: info.alive, ours: info.alive && (info.command === null || info.command === 'redis-server') }
  }

  return {
    dir,

    async start() {
      const current = recorded()
      if (current?.ours) {
        // Just started by someone else, or up for a while: either way it must answer on our port.
        if (await waitUntil(ping, { timeoutMs: 2_000 })) return { reused: true, pid: current.pid }
        throw new ScriptError(
          withLog(
            `Redis for ${dir} runs (pid ${current.pid}) but does not answer on port ${config.port}; ` +
              'it may have been started with another port. Stop it (npm run services:stop), then start again.',
          ),
        )
      }
      if (current !== null) {
        say(`Removing a stale Redis pid file (pid ${current.pid} is not a running Redis)`)
        rmSync(pidFile, { force: true })
      }
      if (await isPortOpen(config.host, config.port)) {
        throw new ScriptError(
          `Port ${config.port} on ${config.host} is already taken by another program, so Redis cannot use it. ` +
            `Stop that program (another npm start or npm test?) or set ${config.portSetting} to a free port.`,
        )
      }

      mkdirSync(dir, { recursive: true })
      await runCommand([
        'redis-server',
        '--bind',
        config.host,
        '--port',
        String(config.port),
        '--daemonize',
        'yes',
        '--pidfile',
        pidFile,
        '--logfile',
        logFile,
        '--dir',
        dir,
        // Test data is thrown away: no snapshots, no append-only file.
        ...(config.ephemeral ? ['--save', '', '--appendonly', 'no'] : []),
      ]).catch((error: unknown) => {
        if (error instanceof ScriptError && error.message === 'redis-server was not found.') {
          throw new ScriptError(
            "redis-server was not found. Install Debian's redis-server package (bash scripts/bootstrap.sh start does it).",
          )
        }
        throw error
      })

      let failedEarly = false
      const ready = await waitUntil(
        async () => {
          const now = recorded()
          // The daemon writes its pid file once it runs; if that process is gone, it has failed.
          if (now !== null && !now.alive) {
            failedEarly = true
            return true
          }
          return now !== null && (await ping())
        },
        { timeoutMs: readyTimeoutMs, intervalMs: 50 },
      )
      const started = recorded()
      if (!ready || failedEarly || started === null || !started.ours) {
        throw new ScriptError(
          withLog(
            failedEarly || (started !== null && !started.alive)
              ? `Redis exited right after starting on port ${config.port}.`
              : `Redis did not answer PING on ${config.host}:${config.port} within ${readyTimeoutMs / 1000} s.`,
          ),
        )
      }
      return { reused: false, pid: started.pid }
    },

    async stop() {
      const current = recorded()
      if (current === null) return false
      if (!current.ours) {
        // Never signal a process we did not start: the recorded pid is dead or now another program's.
        rmSync(pidFile, { force: true })
        return false
      }
      process.kill(current.pid, 'SIGTERM')
      const gone = await waitUntil(() => !inspectProcess(current.pid).alive, { timeoutMs: stopTimeoutMs, intervalMs: 50 })
      if (!gone) {
        say(`Redis (pid ${current.pid}) did not stop within ${stopTimeoutMs / 1000} s of SIGTERM; killing it`)
        process.kill(current.pid, 'SIGKILL')
        await waitUntil(() => !inspectProcess(current.pid).alive, { timeoutMs: 5_000, intervalMs: 50 })
      }
      rmSync(pidFile, { force: true })
      return true
    },

    async status() {
      const current = recorded()
      const base = { name: 'Redis' as const, port: config.port, dir, log: logFile }
      if (current === null || !current.ours) return { ...base, state: 'stopped', pid: null }
      return { ...base, state: (await ping()) ? 'running' : 'not answering', pid: current.pid }
    },
  }
}
