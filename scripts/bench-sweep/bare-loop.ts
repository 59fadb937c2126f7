import { readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { dirname, join } from 'node:path'
import { pathToFileURL } from 'node:url'
import { Worker } from 'node:worker_threads'
import { evaluateDynamicPoint, pointAt, type ResolvedAxis, type Scenario } from '@crackpoint/sim-core'
import type { BareBatch } from './bare-thread.ts'

/**
 * The baseline of the end-to-end figure: sim-core's `pointAt` and `evaluateDynamicPoint` over the same
 * points, with no queue, no database and no rows — only the physics a sweep exists to compute.
 */

/** Wall seconds of the points on this thread, one after another. */
export function bareLoopHere(scenario: Scenario, axes: readonly ResolvedAxis[], indices: readonly number[]): number {
  const t0 = performance.now()
  for (const index of indices) evaluateDynamicPoint(pointAt(scenario, axes, index).scenario)
  return (performance.now() - t0) / 1000
}

function tsxEsmApiUrl(): string {
  const manifestPath = createRequire(import.meta.url).resolve('tsx/package.json')
  const manifest = JSON.parse(readFileSync(manifestPath, 'utf8')) as { exports: { './esm/api': { import: { default: string } } } }
  return pathToFileURL(join(dirname(manifestPath), manifest.exports['./esm/api'].import.default)).href
}

/**
 * Threads that run the bare loop, as many as the worker has job slots, so the comparison is the same
 * hardware doing the same points with and without everything around them. Threads are started and
 * warmed before any timing, as a running worker's are.
 */
export class BareThreads {
  private constructor(private readonly threads: Worker[]) {}

  static async start(count: number): Promise<BareThreads> {
    // Node will not start a thread from a .ts file itself; a short script registers tsx first.
    const boot = `import(${JSON.stringify(tsxEsmApiUrl())}).then((api) => { api.register(); return import(${JSON.stringify(new URL('./bare-thread.ts', import.meta.url).href)}); });`
    return new BareThreads(Array.from({ length: count }, () => new Worker(boot, { eval: true })))
  }

  get count(): number {
    return this.threads.length
  }

  private runOn(thread: Worker, batch: BareBatch): Promise<void> {
    return new Promise((resolve, reject) => {
      const onMessage = () => {
        thread.off('error', onError)
        resolve()
      }
      const onError = (error: Error) => {
        thread.off('message', onMessage)
        reject(error)
      }
      thread.once('message', onMessage).once('error', onError)
      thread.postMessage(batch)
    })
  }

  /**
   * Wall seconds of the points over all threads. Thread k takes every count-th point from k on, so
   * the hard corners of the grid are shared out rather than left to one thread.
   */
  async run(scenario: Scenario, axes: ResolvedAxis[], indices: readonly number[]): Promise<number> {
    const shares = this.threads.map((_, k) => indices.filter((_, i) => i % this.threads.length === k))
    const t0 = performance.now()
    await Promise.all(this.threads.map((thread, k) => this.runOn(thread, { scenario, axes, indices: shares[k]! })))
    return (performance.now() - t0) / 1000
  }

  async close(): Promise<void> {
    await Promise.all(this.threads.map((thread) => thread.terminate()))
  }
}
