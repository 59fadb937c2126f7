import type { PullResult } from '@crackpoint/sim-core'

/** What the page asks the pull worker: one pull of a scenario, numbered so a late answer can be told apart. */
export interface PullRequest {
  id: number
  scenario: unknown
}

export type PullReply =
  | { id: number; ok: true; result: PullResult; elapsedMs: number }
  | { id: number; ok: false; message: string }
