import { parentPort } from 'node:worker_threads'
import { evaluateDynamicPoint, pointAt, type ResolvedAxis, type Scenario } from '@crackpoint/sim-core'

/** One thread of the bare loop: the points it is given, one after another, and nothing else. */
export interface BareBatch {
  scenario: Scenario
  axes: ResolvedAxis[]
  indices: number[]
}

parentPort?.on('message', (batch: BareBatch) => {
  let failed = 0
  for (const index of batch.indices) {
    if (evaluateDynamicPoint(pointAt(batch.scenario, batch.axes, index).scenario).status === 'failed') failed += 1
  }
  parentPort?.postMessage({ computed: batch.indices.length, failed })
})
