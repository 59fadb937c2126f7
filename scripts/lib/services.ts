import type { Config } from './config.ts'
import { createPostgres, type PostgresService } from './postgres.ts'
import { createRedis, type RedisService } from './redis.ts'
import type { ServiceStatus } from './service-status.ts'

export interface StartedServices {
  /** Per service: true when this start launched it, false when an earlier start's instance was reused. */
  postgres: boolean
  redis: boolean
}

export interface Services {
  readonly postgres: PostgresService
  readonly redis: RedisService
  start(): Promise<StartedServices>
  /**
   * Stops the services named (by default both); only ever our own processes, found by their pid files.
   * Tells, per service, whether there was one running to stop.
   */
  stop(which?: StartedServices): Promise<StartedServices>
  status(): Promise<ServiceStatus[]>
}

/** PostgreSQL and Redis of one data folder, started and stopped together. */
export function createServices(config: Config, say: (line: string) => void = () => {}): Services {
  const postgres = createPostgres(config.postgres, config.dataDir, say)
  const redis = createRedis(config.redis, config.dataDir, say)

  async function stop(which: StartedServices = { postgres: true, redis: true }): Promise<StartedServices> {
    const results = await Promise.allSettled([
      which.postgres ? postgres.stop() : Promise.resolve(false),
      which.redis ? redis.stop() : Promise.resolve(false),
    ])
    const [pg, rd] = results
    if (pg?.status === 'rejected') throw pg.reason
    if (rd?.status === 'rejected') throw rd.reason
    return { postgres: pg?.value ?? false, redis: rd?.value ?? false }
  }

  return {
    postgres,
    redis,
    stop,

    async start() {
      const [pg, rd] = await Promise.allSettled([postgres.start(), redis.start()])
      if (pg.status === 'rejected' || rd.status === 'rejected') {
        // Leave nothing half-started behind: stop whichever one this call launched.
        await stop({
          postgres: pg.status === 'fulfilled' && !pg.value.reused,
          redis: rd.status === 'fulfilled' && !rd.value.reused,
        }).catch(() => {})
        throw pg.status === 'rejected' ? pg.reason : (rd as PromiseRejectedResult).reason
      }
      for (const [name, outcome, port] of [
        ['PostgreSQL', pg.value, config.postgres.port],
        ['Redis', rd.value, config.redis.port],
      ] as const) {
        say(`${name} ${outcome.reused ? 'was already running' : 'started'} on 127.0.0.1:${port} (pid ${outcome.pid})`)
      }
      return { postgres: !pg.value.reused, redis: !rd.value.reused }
    },

    status: () => Promise.all([postgres.status(), redis.status()]),
  }
}
