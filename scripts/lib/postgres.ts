import { accessSync, chownSync, constants, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import type { PostgresConfig } from './config.ts'
import { locateCluster, type ClusterLocation } from './cluster-location.ts'
import { inspectProcess } from './inspect-process.ts'
import { isPortOpen } from './is-port-open.ts'
import { postgresAccount, type PostgresAccount } from './postgres-account.ts'
import { readPidFile } from './read-pid-file.ts'
import { runCommand } from './run-command.ts'
import { ScriptError } from './script-error.ts'
import type { ServiceStatus, StartOutcome } from './service-status.ts'
import { shellQuote } from './shell-quote.ts'
import { tailFile } from './tail-file.ts'
import { waitUntil } from './wait-until.ts'

export interface PostgresService {
  /** The cluster folder, once it is known (after start, stop or status). */
  clusterDir(): string
  start(): Promise<StartOutcome>
  /** Stops the server of this cluster, if it runs; tells whether there was one to stop. */
  stop(): Promise<boolean>
  status(): Promise<ServiceStatus>
}

const readyTimeoutMs = 30_000

/**
 * The PostgreSQL server of one data folder: created with initdb on first start, listening on loopback
 * and its own port only, its socket inside the cluster folder (nothing in /var/run is touched).
 */
export function createPostgres(
  config: PostgresConfig,
  dataDir: string,
  say: (line: string) => void = () => {},
): PostgresService {
  let account: PostgresAccount | undefined
  let location: ClusterLocation | undefined
  const getAccount = () => (account ??= postgresAccount())
  const locate = (prepare: boolean): ClusterLocation => {
    if (location && (!prepare || existsSync(location.dir))) return location
    const found = locateCluster(dataDir, getAccount(), { prepare })
    if (prepare && found.note !== null) say(found.note)
    if (prepare) location = found
    return found
  }
  const bin = (name: string) => join(config.binDir, name)
  const logFile = (dir: string) => join(dir, 'postgresql.log')
  const pidFile = (dir: string) => join(dir, 'postmaster.pid')
  const withLog = (dir: string, message: string) => {
    const tail = tailFile(logFile(dir))
    return tail === '' ? message : `${message}\n  Last lines of ${logFile(dir)}:\n${tail}`
  }

  async function run(argv: string[], extraEnv?: Record<string, string>, allowFailure = false) {
    const command = getAccount().command(argv, extraEnv)
    // The postgres user may not be allowed into our working directory.
    return runCommand(command.argv, { env: command.env, cwd: '/', allowFailure })
  }

  /** postmaster.pid: line 1 the pid, line 4 the port (PostgreSQL's documented layout). */
  function recorded(dir: string): { pid: number; port: number | null; ours: boolean } | null {
    const pid = readPidFile(pidFile(dir))
    if (pid === null) return null
    let port: number | null = null
    try {
      const line = readFileSync(pidFile(dir), 'utf8').split('\n')[3]?.trim()
      if (line && /^\d+$/.test(line)) port = Number(line)
    } catch {
      // Read race with a server that just stopped: treat as no port.
    }
    const info = inspectProcess(pid)
    return { pid, port, ours: info.alive && (info.command === null || info.command === 'postgres') }
  }

  const isReady = async () =>
    (await run([bin('pg_isready'), '-q', '-h', config.host, '-p', String(config.port), '-t', '1'], undefined, true))
      .code === 0

  function checkBinaries() {
    for (const name of ['initdb', 'pg_ctl', 'createdb', 'pg_isready', 'psql']) {
      try {
        accessSync(bin(name), constants.X_OK)
      } catch {
        throw new ScriptError(
          `PostgreSQL's ${name} is not in ${config.binDir}. Install Debian's postgresql package ` +
            '(bash scripts/bootstrap.sh start does it), or set CRACKPOINT_PG_BIN to the folder of the server programs.',
        )
      }
    }
  }

  function checkOwner(dir: string) {
    const owner = statSync(dir).uid
    if (owner !== getAccount().uid) {
      throw new ScriptError(
        `The PostgreSQL cluster ${dir} belongs to user id ${owner}, but it would run as ${getAccount().name} ` +
          `(uid ${getAccount().uid}). Run as the user who created it, or remove ${dir} to start afresh.`,
      )
    }
  }

  async function initCluster(dir: string) {
    const acct = getAccount()
    mkdirSync(dir, { recursive: true, mode: 0o700 })
    if (acct.asRoot) chownSync(dir, acct.uid, acct.gid)
    const reach = await run(['test', '-w', dir], undefined, true)
    if (reach.code !== 0) {
      throw new ScriptError(`The ${acct.name} user cannot write to ${dir}; check the permissions of its parent folders.`)
    }
    // The password goes through a file so it never shows in the process list; removed right after.
    const pwfile = join(dirname(dir), `.pg-password-${process.pid}`)
    writeFileSync(pwfile, `${config.password}\n`, { mode: 0o600 })
    try {
      if (acct.asRoot) chownSync(pwfile, acct.uid, acct.gid)
      say(`Creating the PostgreSQL cluster in ${dir}`)
      await run([
        bin('initdb'),
        '-D',
        dir,
        '-U',
        config.user,
        '-E',
        'UTF8',
        '--locale=C',
        '--auth=scram-sha-256',
        `--pwfile=${pwfile}`,
        ...(config.ephemeral ? ['--no-sync'] : []),
      ])
    } finally {
      rmSync(pwfile, { force: true })
    }
  }

  async function ensureDatabase() {
    const env = { PGPASSWORD: config.password }
    const connection = ['-h', config.host, '-p', String(config.port), '-U', config.user]
    const query = `SELECT 1 FROM pg_database WHERE datname = '${config.database}'`
    const found = await run([bin('psql'), '-X', '-q', '-t', '-A', ...connection, '-d', 'postgres', '-c', query], env)
    if (found.output.trim() === '1') return
    say(`Creating the database ${config.database}`)
    await run([bin('createdb'), ...connection, config.database], env)
  }

  async function startServer(dir: string) {
    // Unix socket paths are limited to 107 bytes on Linux (sun_path); PostgreSQL's own error is easy to miss.
    const socket = join(dir, `.s.PGSQL.${config.port}`)
    if (Buffer.byteLength(socket) > 107) {
      throw new ScriptError(
        `The PostgreSQL socket path ${socket} is longer than the 107 bytes Linux allows; ` +
          'set CRACKPOINT_DATA_DIR to a shorter folder.',
      )
    }
    const options = [
      '-c listen_addresses=127.0.0.1',
      `-p ${config.port}`,
      `-c unix_socket_directories=${shellQuote(dir)}`,
      // A test cluster is thrown away afterwards, so durability buys nothing there.
      ...(config.ephemeral ? ['-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off'] : []),
    ].join(' ')
    const result = await run(
      [bin('pg_ctl'), '-D', dir, '-l', logFile(dir), '-w', '-t', String(readyTimeoutMs / 1000), '-o', options, 'start'],
      undefined,
      true,
    )
    if (result.code !== 0) {
      throw new ScriptError(withLog(dir, `PostgreSQL did not start on port ${config.port}:\n  ${result.output.trim()}`))
    }
  }

  async function waitReady(dir: string) {
    if (!(await waitUntil(isReady, { timeoutMs: readyTimeoutMs, intervalMs: 100 }))) {
      throw new ScriptError(
        withLog(dir, `PostgreSQL did not answer on ${config.host}:${config.port} within ${readyTimeoutMs / 1000} s.`),
      )
    }
  }

  return {
    clusterDir: () => locate(false).dir,

    async start() {
      checkBinaries()
      const { dir } = locate(true)
      const initialized = existsSync(join(dir, 'PG_VERSION'))
      if (initialized) checkOwner(dir)

      const current = recorded(dir)
      if (current?.ours) {
        if (current.port !== null && current.port !== config.port) {
          throw new ScriptError(
            `PostgreSQL for ${dir} already runs on port ${current.port}, not ${config.port}. ` +
              'Stop it first (npm run services:stop), then start again.',
          )
        }
        await waitReady(dir)
        await ensureDatabase()
        return { reused: true, pid: current.pid }
      }
      if (current !== null) {
        say(`Removing a stale PostgreSQL pid file (pid ${current.pid} is not running)`)
        rmSync(pidFile(dir), { force: true })
      }

      if (await isPortOpen(config.host, config.port)) {
        throw new ScriptError(
          `Port ${config.port} on ${config.host} is already taken by another program, so PostgreSQL cannot use it. ` +
            `Stop that program (another npm start or npm test?) or set ${config.portSetting} to a free port.`,
        )
      }

      if (!initialized) {
        if (existsSync(dir) && readdirSync(dir).length > 0) {
          throw new ScriptError(`${dir} is not empty and holds no PostgreSQL cluster; move it away or remove it.`)
        }
        await initCluster(dir)
      }
      await startServer(dir)
      await waitReady(dir)
      await ensureDatabase()
      const started = recorded(dir)
      if (started === null) throw new ScriptError(withLog(dir, `PostgreSQL started but left no pid file in ${dir}.`))
      return { reused: false, pid: started.pid }
    },

    async stop() {
      const { dir } = locate(false)
      const current = recorded(dir)
      if (current === null) return false
      if (!current.ours) {
        // Never signal a process we did not start: the pid was reused by another program.
        rmSync(pidFile(dir), { force: true })
        return false
      }
      const result = await run([bin('pg_ctl'), '-D', dir, '-m', 'fast', '-w', '-t', '60', 'stop'], undefined, true)
      if (result.code !== 0 && inspectProcess(current.pid).alive) {
        throw new ScriptError(withLog(dir, `PostgreSQL (pid ${current.pid}) did not stop:\n  ${result.output.trim()}`))
      }
      return true
    },

    async status() {
      const { dir } = locate(false)
      const current = recorded(dir)
      const base = { name: 'PostgreSQL' as const, port: config.port, dir, log: logFile(dir) }
      if (current === null || !current.ours) return { ...base, state: 'stopped', pid: null }
      const ready = await isReady()
      return { ...base, state: ready ? 'running' : 'not answering', pid: current.pid, port: current.port ?? config.port }
    },
  }
}
