import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { pointAt, type PullResult, type Scenario, type SweepPoint } from '@crackpoint/sim-core'
import { ApiError } from '@/api/api-error'
import { sweepsApi } from '@/api/sweeps'
import type { Sweep } from '@/api/types'
import { createPullClient, PullCancelled, type PullClient } from '@/workers/pull-client'

/**
 * One point of a sweep opened as a whole pull: sim-core's pointAt rebuilds the point's scenario from the
 * sweep's own scenario snapshot (fetched once per sweep, so a scenario saved since changes nothing) and its
 * axes, and the pull runs in the browser's pull worker, so opening it costs no compute units. A click on
 * another point replaces the run still going.
 */
export const usePointPullStore = defineStore('point-pull', () => {
  const point = shallowRef<SweepPoint | null>(null)
  const result = shallowRef<PullResult | null>(null)
  const running = ref(false)
  const error = ref<string | null>(null)
  let client: PullClient | null = null
  let snapshot: { sweepId: string; scenario: Scenario | null } | null = null
  /** Guards against a snapshot or pull arriving after another point was opened or the pull closed. */
  let asked = 0

  async function snapshotOf(sweepId: string): Promise<Scenario | null> {
    if (snapshot?.sweepId === sweepId) return snapshot.scenario
    const { sweep } = await sweepsApi.get(sweepId)
    snapshot = { sweepId, scenario: sweep.scenarioSnapshot }
    return sweep.scenarioSnapshot
  }

  async function open(sweep: Pick<Sweep, 'id' | 'axes'>, index: number): Promise<void> {
    client ??= createPullClient()
    const mine = ++asked
    error.value = null
    result.value = null
    running.value = true
    let scenario: Scenario | null
    try {
      scenario = await snapshotOf(sweep.id)
    } catch (cause) {
      if (mine !== asked) return
      running.value = false
      error.value = cause instanceof ApiError ? cause.message : 'The scenario this sweep ran could not be loaded.'
      return
    }
    if (mine !== asked) return
    if (!scenario) {
      running.value = false
      point.value = null
      error.value = 'The scenario this sweep ran is no longer accepted by this version of Crackpoint, so its points cannot be opened as pulls.'
      return
    }
    let picked: SweepPoint
    try {
      picked = pointAt(scenario, sweep.axes, index)
    } catch (cause) {
      running.value = false
      point.value = null
      error.value = cause instanceof Error ? cause.message : 'That point is not part of the sweep.'
      return
    }
    point.value = picked
    try {
      const answer = await client.run(picked.scenario)
      if (mine !== asked) return
      result.value = answer.result
      running.value = false
    } catch (cause) {
      if (cause instanceof PullCancelled || mine !== asked) return
      error.value = cause instanceof Error ? cause.message : 'The pull could not be run.'
      running.value = false
    }
  }

  function close(): void {
    asked += 1
    client?.cancel()
    running.value = false
    point.value = null
    result.value = null
    error.value = null
  }

  return { point, result, running, error, open, close }
})
