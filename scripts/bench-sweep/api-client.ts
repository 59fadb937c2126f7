import { randomBytes } from 'node:crypto'
import type { Scenario } from '@crackpoint/sim-core'
import { ScriptError } from '../lib/script-error.ts'

export interface SweepState {
  id: string
  state: 'queued' | 'running' | 'done' | 'failed' | 'cancelled'
  pointCount: number
  pointsDone: number
  pointsFailed: number
}

export type AxisInput = { path: string; range: { from: number; to: number; count: number } }

/** The routes the benchmark drives, over HTTP on one kept-alive connection pool, as a web client would. */
export class BenchClient {
  private token = ''
  workspaceId = ''

  constructor(readonly baseUrl: string) {}

  private async call<T>(method: string, path: string, body?: unknown): Promise<T> {
    const response = await fetch(`${this.baseUrl}/api${path}`, {
      method,
      headers: {
        ...(body === undefined ? {} : { 'content-type': 'application/json' }),
        ...(this.token ? { authorization: `Bearer ${this.token}` } : {}),
      },
      ...(body === undefined ? {} : { body: JSON.stringify(body) }),
    })
    const text = await response.text()
    if (!response.ok) {
      const quota = response.status === 402 ? ' (over quota: the benchmark gives its workspace a large quota first; see grantQuota)' : ''
      throw new ScriptError(`${method} /api${path} answered ${response.status}${quota}: ${text.slice(0, 500)}`)
    }
    return JSON.parse(text) as T
  }

  /** A workspace of the invented shop for this run alone; its admin may run sweeps. */
  async register(): Promise<void> {
    const tag = randomBytes(4).toString('hex')
    const reply = await this.call<{ token: string; user: { workspace: { id: string } } }>('POST', '/auth/register', {
      workspaceName: `Harrow Lane Boostworks bench ${tag}`,
      displayName: 'Bench runner',
      email: `bench-${tag}@harrow-lane.example`,
      password: `spool-${tag}-wastegate-bench`,
    })
    this.token = reply.token
    this.workspaceId = reply.user.workspace.id
  }

  async createScenario(name: string): Promise<{ id: string; data: Scenario }> {
    const reply = await this.call<{ scenario: { id: string; data: Scenario } }>('POST', '/scenarios', { name })
    return reply.scenario
  }

  async createSweep(scenarioId: string, level: 'static' | 'dynamic', axes: AxisInput[]): Promise<SweepState> {
    return (await this.call<{ sweep: SweepState }>('POST', '/sweeps', { scenarioId, level, axes })).sweep
  }

  async sweep(id: string): Promise<SweepState> {
    return (await this.call<{ sweep: SweepState }>('GET', `/sweeps/${id}`)).sweep
  }

  async surface(id: string, metric: string): Promise<{ z: (number | null)[][] }> {
    return this.call('GET', `/sweeps/${id}/surface?metric=${metric}&x=0&y=1`)
  }

  /** The lightest signed-in route: the token, the member's row, a small answer. */
  async me(): Promise<unknown> {
    return this.call('GET', '/me')
  }
}
