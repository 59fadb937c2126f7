import { spawn, type ChildProcess } from 'node:child_process'
import { createServer, type Server } from 'node:net'
import { join } from 'node:path'
import { writeFileSync, existsSync } from 'node:fs'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import type { RedisConfig } from '../../scripts/lib/config.ts'
import { inspectProcess } from '../../scripts/lib/inspect-process.ts'
import { createRedis, type RedisService } from '../../scripts/lib/redis.ts'
import { redisPing } from '../../scripts/lib/redis-ping.ts'
import { freePort, tempDir } from './helpers.ts'

describe('createRedis', () => {
  let folder: ReturnType<typeof tempDir>
  let config: RedisConfig
  let redis: RedisService
  let bystander: ChildProcess | undefined
  let blocker: Server | undefined

  beforeEach(async () => {
    folder = tempDir('redis')
    config = { host: '127.0.0.1', port: await freePort(), ephemeral: true, portSetting: 'CRACKPOINT_REDIS_PORT' }
    redis = createRedis(config, folder.dir)
  })

  afterEach(async () => {
    await redis.stop()
    bystander?.kill('SIGKILL')
    bystander = undefined
    blocker?.close()
    blocker = undefined
    folder.remove()
  })

  it('starts once and reuses the running server on the second start', async () => {
    const first = await redis.start()
    expect(first.reused).toBe(false)
    expect(await redisPing(config.host, config.port)).toBe(true)

    const second = await redis.start()
    expect(second).toEqual({ reused: true, pid: first.pid })
    expect((await redis.status()).state).toBe('running')
  })

  it('stops the server it started, by its pid', async () => {
    const { pid } = await redis.start()
    expect(await redis.stop()).toBe(true)
    expect(inspectProcess(pid).alive).toBe(false)
    expect(await redisPing(config.host, config.port)).toBe(false)
    expect(await redis.stop()).toBe(false)
    expect((await redis.status()).state).toBe('stopped')
  })

  it('never signals another program whose pid ended up in the pid file, and starts anyway', async () => {
    bystander = spawn('sleep', ['60'], { stdio: 'ignore' })
    const pidFile = join(redis.dir, 'redis.pid')
    await redis.start()
    await redis.stop()
    writeFileSync(pidFile, `${bystander.pid}\n`)

    expect(await redis.stop()).toBe(false)
    expect(inspectProcess(bystander.pid!).alive).toBe(true)
    expect(existsSync(pidFile)).toBe(false)

    writeFileSync(pidFile, `${bystander.pid}\n`)
    const restarted = await redis.start()
    expect(restarted.reused).toBe(false)
    expect(restarted.pid).not.toBe(bystander.pid)
    expect(inspectProcess(bystander.pid!).alive).toBe(true)
  })

  it('fails with a message naming the setting when another program holds the port', async () => {
    blocker = createServer()
    await new Promise<void>((resolvePromise) => blocker!.listen(config.port, '127.0.0.1', resolvePromise))
    await expect(redis.start()).rejects.toThrow(
      new RegExp(`Port ${config.port} on 127.0.0.1 is already taken.*set CRACKPOINT_REDIS_PORT`),
    )
  })
})
