import { afterEach, describe, expect, it } from 'vitest'
import { ChildGroup } from '../../scripts/lib/child-group.ts'
import { inspectProcess } from '../../scripts/lib/inspect-process.ts'

const node = process.execPath
const forever = ['-e', 'setInterval(() => {}, 1000)']

describe('ChildGroup', () => {
  let group: ChildGroup | undefined
  afterEach(async () => {
    await group?.stopAll(2_000)
  })

  it('reports the first child that exits, with its exit code', async () => {
    group = new ChildGroup(['api', 'worker'])
    group.spawn('api', [node, ...forever], { cwd: process.cwd(), env: process.env })
    group.spawn('worker', [node, '-e', 'process.exit(3)'], { cwd: process.cwd(), env: process.env })
    expect(await group.firstExit).toEqual({ name: 'worker', code: 3, signal: null })
  })

  it('stops every child still running, by its own pid', async () => {
    group = new ChildGroup(['api', 'worker'])
    const api = group.spawn('api', [node, ...forever], { cwd: process.cwd(), env: process.env })
    const worker = group.spawn('worker', [node, ...forever], { cwd: process.cwd(), env: process.env })
    await group.stopAll(5_000)
    expect(inspectProcess(api.pid!).alive).toBe(false)
    expect(inspectProcess(worker.pid!).alive).toBe(false)
  })

  it('kills a child that ignores SIGTERM once the grace period is over', async () => {
    group = new ChildGroup(['api'])
    const stubborn = group.spawn(
      'api',
      [node, '-e', "process.on('SIGTERM', () => {}); console.log('ready'); setInterval(() => {}, 1000)"],
      { cwd: process.cwd(), env: process.env },
    )
    await new Promise((resolvePromise) => stubborn.stdout!.once('data', resolvePromise))
    const started = Date.now()
    await group.stopAll(300)
    expect(inspectProcess(stubborn.pid!).alive).toBe(false)
    expect(Date.now() - started).toBeGreaterThanOrEqual(300)
  })
})
