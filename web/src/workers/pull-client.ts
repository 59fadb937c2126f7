import type { PullResult, Scenario } from '@crackpoint/sim-core'
import type { PullReply, PullRequest } from './pull-protocol'

export interface PullAnswer {
  result: PullResult
  elapsedMs: number
}

/** A run that a newer one replaced, or that the user stopped. */
export class PullCancelled extends Error {
  constructor() {
    super('The pull was stopped.')
    this.name = 'PullCancelled'
  }
}

export interface PullClient {
  /** Runs a pull in the worker; a run still going is stopped first. */
  run(scenario: Scenario): Promise<PullAnswer>
  /** Stops the run that is going, if any. */
  cancel(): void
}

/**
 * One pull at a time in a module worker. Stopping a run ends its worker (a pull cannot be interrupted from
 * outside otherwise); the next run starts a fresh one.
 */
export function createPullClient(): PullClient {
  let worker: Worker | null = null
  let nextId = 1
  let pending: { id: number; resolve: (answer: PullAnswer) => void; reject: (error: Error) => void } | null = null

  function settle(reply: PullReply): void {
    if (!pending || reply.id !== pending.id) return
    const { resolve, reject } = pending
    pending = null
    if (reply.ok) resolve({ result: reply.result, elapsedMs: reply.elapsedMs })
    else reject(new Error(reply.message))
  }

  function start(): Worker {
    const created = new Worker(new URL('./pull.worker.ts', import.meta.url), { type: 'module' })
    created.onmessage = (event: MessageEvent<PullReply>) => settle(event.data)
    created.onerror = (event) => {
      event.preventDefault()
      const failed = pending
      pending = null
      worker?.terminate()
      worker = null
      failed?.reject(new Error(event.message || 'The pull stopped with an error.'))
    }
    return created
  }

  function cancel(): void {
    if (!pending) return
    const stopped = pending
    pending = null
    worker?.terminate()
    worker = null
    stopped.reject(new PullCancelled())
  }

  return {
    run(scenario) {
      cancel()
      worker ??= start()
      const id = nextId++
      const request: PullRequest = { id, scenario }
      return new Promise<PullAnswer>((resolve, reject) => {
        pending = { id, resolve, reject }
        worker!.postMessage(request)
      })
    },
    cancel,
  }
}
