import type { PullResult, Scenario, SolveRequest, SolveResult } from '@crackpoint/sim-core'
import type { PullReply, PullRequest } from './pull-protocol'

export interface PullAnswer {
  result: PullResult
  elapsedMs: number
}

export interface SolveAnswer {
  solved: SolveResult
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
  /** Runs a target solve (a settled-boost target runs pulls) in the worker; a run still going is stopped first. */
  solve(scenario: Scenario, request: SolveRequest): Promise<SolveAnswer>
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
  type Answered = Extract<PullReply, { ok: true }>
  let pending: { id: number; resolve: (answer: Answered) => void; reject: (error: Error) => void } | null = null

  function settle(reply: PullReply): void {
    if (!pending || reply.id !== pending.id) return
    const { resolve, reject } = pending
    pending = null
    if (reply.ok) resolve(reply)
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

  function send(scenario: Scenario, solve?: SolveRequest): Promise<Answered> {
    cancel()
    worker ??= start()
    const id = nextId++
    const request: PullRequest = solve === undefined ? { id, scenario } : { id, scenario, solve }
    return new Promise<Answered>((resolve, reject) => {
      pending = { id, resolve, reject }
      worker!.postMessage(request)
    })
  }

  return {
    async run(scenario) {
      const reply = await send(scenario)
      if (!('result' in reply)) throw new Error('The worker answered a pull with something else.')
      return { result: reply.result, elapsedMs: reply.elapsedMs }
    },
    async solve(scenario, request) {
      const reply = await send(scenario, request)
      if (!('solved' in reply)) throw new Error('The worker answered a solve with something else.')
      return { solved: reply.solved, elapsedMs: reply.elapsedMs }
    },
    cancel,
  }
}
