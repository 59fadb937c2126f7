import type { PullResult, SolveRequest, SolveResult } from '@crackpoint/sim-core'

/**
 * What the page asks the pull worker, numbered so a late answer can be told apart: one pull of a scenario, or with
 * `solve` a target solve whose target is a pull's settled boost (a few pulls in a row).
 */
export interface PullRequest {
  id: number
  scenario: unknown
  solve?: SolveRequest
}

export type PullReply =
  | { id: number; ok: true; result: PullResult; elapsedMs: number }
  | { id: number; ok: true; solved: SolveResult; elapsedMs: number }
  | { id: number; ok: false; message: string }
