import type { Scenario } from '../scenario.ts'

/** What the CLI needs of a pull: the shape `runPull` returns, read loosely so the report names what it finds. */
export interface PullOutput {
  series: unknown
  metrics: Record<string, unknown>
  flags: unknown
  stats: Record<string, unknown>
}

export type RunPull = (s: Scenario) => PullOutput

/**
 * The dynamic model, loaded on first use so that `balance` and static sweeps start without the ODE code; null
 * when this build of sim-core has no dynamic model.
 */
export async function loadRunPull(): Promise<RunPull | null> {
  const specifier = '../pull/index.ts'
  try {
    const mod = (await import(specifier)) as { runPull?: unknown }
    return typeof mod.runPull === 'function' ? (mod.runPull as RunPull) : null
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code
    if (code === 'ERR_MODULE_NOT_FOUND' || /Cannot find module|Failed to load url|does not exist/i.test(String(error))) {
      if (String(error).includes('pull')) return null
    }
    throw error
  }
}

export const PULL_NOT_AVAILABLE =
  'the dynamic pull is not available in this build of sim-core (no src/pull/); `balance` and static sweeps work'
