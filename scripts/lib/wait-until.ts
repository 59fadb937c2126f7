import { setTimeout as sleep } from 'node:timers/promises'

/** Polls `check` until it returns true or the time is up; tells which happened. */
export async function waitUntil(
  check: () => boolean | Promise<boolean>,
  options: { timeoutMs: number; intervalMs?: number },
): Promise<boolean> {
  const deadline = Date.now() + options.timeoutMs
  for (;;) {
    if (await check()) return true
    if (Date.now() >= deadline) return false
    await sleep(options.intervalMs ?? 100)
  }
}
