import { parseScenario, runPull, solveForTarget } from '@crackpoint/sim-core'
import type { PullReply, PullRequest } from './pull-protocol'

/**
 * Runs pulls off the page's thread: a pull takes from a tenth of a second to several seconds, and a target solve
 * on a pull's settled boost several of them, which on the page would freeze typing. The scenario is checked again
 * here, since a message is only data.
 */
function answer(request: PullRequest): PullReply {
  const parsed = parseScenario(request.scenario)
  if (!parsed.ok) {
    const first = parsed.issues[0]
    return { id: request.id, ok: false, message: first ? `${first.path} ${first.message}` : 'The scenario is not valid.' }
  }
  const started = performance.now()
  try {
    if (request.solve) {
      const solved = solveForTarget(parsed.scenario, request.solve)
      return { id: request.id, ok: true, solved, elapsedMs: performance.now() - started }
    }
    const result = runPull(parsed.scenario)
    return { id: request.id, ok: true, result, elapsedMs: performance.now() - started }
  } catch (error) {
    // Only bad configuration throws in sim-core; it is reported, not lost with the worker.
    return { id: request.id, ok: false, message: error instanceof Error ? error.message : String(error) }
  }
}

self.onmessage = (event: MessageEvent<PullRequest>) => {
  postMessage(answer(event.data))
}
