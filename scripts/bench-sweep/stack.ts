import { chmodSync, mkdtempSync, rmSync } from 'node:fs'
import { createServer } from 'node:net'
import { tmpdir } from 'node:os'
import { dirname, join, sep } from 'node:path'
import knexPkg from 'knex'
import type { Knex } from 'knex'
import { ChildGroup, type ChildExit } from '../lib/child-group.ts'
import { CleanupStack } from '../lib/cleanup-stack.ts'
import { fallbackClusterRoot } from '../lib/cluster-location.ts'
import { parseConfig, type Config } from '../lib/config.ts'
import { repoRoot } from '../lib/repo-root.ts'
import { ScriptError } from '../lib/script-error.ts'
import { createServices } from '../lib/services.ts'
import { waitUntil } from '../lib/wait-until.ts'
import { runMigrations } from '../migrate.ts'
import type { BenchOptions } from './options.ts'

/** A loopback port the OS has just handed out and nobody holds, for the API this run starts. */
function freePort(): Promise<number> {
  return new Promise((resolvePromise, reject) => {
    const server = createServer()
    server.once('error', reject)
    server.listen(0, '127.0.0.1', () => {
      const address = server.address()
      server.close(() => (typeof address === 'object' && address ? resolvePromise(address.port) : reject(new Error('no free port'))))
    })
  })
}

export interface WorkerSet {
  readonly processes: number
  readonly concurrency: number
  readonly pids: readonly number[]
  stop(): Promise<void>
}

/** The processes of the stack, by role, for the CPU breakdown. */
export interface StackPids {
  api: number[]
  postgres: number[]
  redis: number[]
}

export interface BenchStack {
  readonly apiUrl: string
  readonly databaseUrl: string
  /** The benchmark's own connection, for the quota grant and the plain-SQL baseline. */
  readonly knex: Knex
  readonly pids: StackPids
  startWorkers(processes: number, concurrency: number): WorkerSet
  /** Throws when the API or a worker not yet told to stop has exited: a sweep would then wait forever. */
  checkAlive(): void
  close(): Promise<void>
}

/**
 * Throwaway PostgreSQL and Redis in a fresh temporary folder (as `npm test` starts them, on the
 * benchmark's own ports), the migrations, and the API as its own process. PostgreSQL keeps fsync on,
 * as a deployment would: the per-batch commits are part of what a sweep costs. Everything is stopped
 * and removed by close(), also after a failure.
 */
export async function startStack(options: BenchOptions, say: (line: string) => void): Promise<BenchStack> {
  const cleanup = new CleanupStack()
  const tmp = mkdtempSync(join(tmpdir(), 'crackpoint-bench-'))
  cleanup.push(`remove ${tmp}`, () => rmSync(tmp, { recursive: true, force: true }))
  const close = async () => {
    await cleanup.runAll((line) => console.error(`[bench] ${line}`))
  }
  try {
    // mkdtemp makes the folder 0700; as root, PostgreSQL runs as the postgres user and must pass through it.
    chmodSync(tmp, 0o755)
    const parsed = parseConfig(
      { ...process.env, CRACKPOINT_TEST_PG_PORT: String(options.pgPort), CRACKPOINT_TEST_REDIS_PORT: String(options.redisPort) },
      { mode: 'test', dataDir: tmp },
    )
    const config: Config = {
      ...parsed,
      postgres: { ...parsed.postgres, ephemeral: false, portSetting: 'CRACKPOINT_BENCH_PG_PORT' },
      redis: { ...parsed.redis, portSetting: 'CRACKPOINT_BENCH_REDIS_PORT' },
    }
    const services = createServices(config, say)
    cleanup.push('remove the benchmark cluster', () => {
      const dir = services.postgres.clusterDir()
      if (!dir.startsWith(tmp + sep) && dir.startsWith(fallbackClusterRoot + sep)) rmSync(dirname(dir), { recursive: true, force: true })
    })
    await services.start()
    cleanup.push('stop the benchmark services', () => services.stop())
    await runMigrations({ databaseUrl: config.databaseUrl })

    const knex = knexPkg({ client: 'pg', connection: config.databaseUrl, pool: { min: 0, max: 2 } })
    cleanup.push('close the benchmark connection', () => knex.destroy())

    const baseEnv: NodeJS.ProcessEnv = {
      ...process.env,
      NODE_ENV: 'development',
      DATABASE_URL: config.databaseUrl,
      REDIS_URL: config.redisUrl,
      LOG_LEVEL: 'warn',
    }
    const port = await freePort()
    const apiUrl = `http://127.0.0.1:${port}`
    const api = new ChildGroup(['api'])
    cleanup.push('stop the API', () => api.stopAll())
    let apiExited = false
    void api.firstExit.then(() => (apiExited = true))
    const apiChild = api.spawn('api', [process.execPath, '--import', 'tsx', join('api', 'src', 'server.ts')], {
      cwd: repoRoot,
      env: {
        ...baseEnv,
        HOST: '127.0.0.1',
        PORT: String(port),
        WEB_DIST: join(tmp, 'no-web-app'),
        SWEEP_MAX_POINTS: String(Math.max(100_000, options.points, options.scalingPoints)),
        ...(options.chunkSize === undefined ? {} : { SWEEP_DYNAMIC_CHUNK_SIZE: String(options.chunkSize) }),
      },
    })
    const up = await waitUntil(
      async () => apiExited || (await fetch(`${apiUrl}/api/health`).then((r) => r.ok, () => false)),
      { timeoutMs: 60_000, intervalMs: 200 },
    )
    if (!up || apiExited) throw new ScriptError(`The API did not answer on ${apiUrl} within 60 s.`)

    const statuses = await services.status()
    const pidOf = (name: 'PostgreSQL' | 'Redis') => statuses.filter((s) => s.name === name && s.pid !== null).map((s) => s.pid!)
    const pids: StackPids = {
      api: apiChild.pid === undefined ? [] : [apiChild.pid],
      postgres: pidOf('PostgreSQL'),
      redis: pidOf('Redis'),
    }

    const workerSets: ChildGroup[] = []
    const crashes: string[] = []
    const describe = (exit: ChildExit) => `${exit.name} exited (${exit.signal ?? `code ${exit.code}`})`
    void api.firstExit.then((exit) => crashes.push(describe(exit)))
    return {
      apiUrl,
      pids,
      databaseUrl: config.databaseUrl,
      knex,
      startWorkers(processes, concurrency) {
        const names = Array.from({ length: processes }, (_, i) => `worker ${i + 1}`)
        const group = new ChildGroup(names)
        workerSets.push(group)
        let stopping = false
        void group.firstExit.then((exit) => {
          if (!stopping) crashes.push(describe(exit))
        })
        const workerPids: number[] = []
        for (const name of names) {
          const child = group.spawn(name, [process.execPath, '--import', 'tsx', join('worker', 'src', 'main.ts')], {
            cwd: repoRoot,
            env: { ...baseEnv, WORKER_CONCURRENCY: String(concurrency) },
          })
          if (child.pid !== undefined) workerPids.push(child.pid)
        }
        return {
          processes,
          concurrency,
          pids: workerPids,
          stop: () => {
            stopping = true
            return group.stopAll()
          },
        }
      },
      checkAlive() {
        if (crashes.length > 0) throw new ScriptError(`${crashes.join('; ')} during the benchmark; its output is above.`)
      },
      async close() {
        // The API's exit from here on is ours, not a crash.
        crashes.length = 0
        for (const group of workerSets) await group.stopAll()
        await close()
      },
    }
  } catch (error) {
    await close()
    throw error
  }
}

/**
 * Creating a sweep spends compute units (1 a dynamic point); the run's own workspace gets a monthly
 * quota far above what it will use, so the benchmark measures sweeps, not the quota check's refusals.
 */
export async function grantQuota(knex: Knex, workspaceId: string, units: number): Promise<void> {
  await knex.raw(
    `insert into quotas (workspace_id, user_id, monthly_compute_units) values (?, null, ?)
     on conflict on constraint quotas_scope_unique do update set monthly_compute_units = excluded.monthly_compute_units, updated_at = now()`,
    [workspaceId, units],
  )
}
