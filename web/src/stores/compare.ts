import { computed, reactive, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { computeBalance, parseScenario, type BalanceResult, type PullResult, type Scenario } from '@crackpoint/sim-core'
import { ApiError } from '@/api/api-error'
import { compareApi } from '@/api/compare'
import { scenariosApi } from '@/api/scenarios'
import type { ScenarioRow, Sweep } from '@/api/types'
import { surfaceDifference, type SurfaceDifference } from '@/composables/surface-difference'
import {
  defaultBottle,
  defaultTank,
  scenarioSetpoint,
  supplyVariants,
  type BottleInputs,
  type TankInputs,
} from '@/composables/supply-comparison'
import { createPullClient, PullCancelled, type PullClient } from '@/workers/pull-client'

export interface ComparedScenario {
  row: ScenarioRow
  scenario: Scenario
  balance: BalanceResult
}

export interface SupplyRun {
  scenario: Scenario
  result: PullResult
}

/**
 * Scenarios side by side with their static balance, and the ready comparison of a CO₂ bottle against a
 * compressor with tank on one scenario: two pulls run one after the other in the browser's pull worker.
 */
export const useCompareStore = defineStore('compare', () => {
  const rows = ref<ScenarioRow[]>([])
  const loading = ref(false)
  const loadError = ref<string | null>(null)
  const pickedIds = ref<string[]>([])

  async function fetchScenarios(): Promise<void> {
    loading.value = true
    loadError.value = null
    try {
      rows.value = (await scenariosApi.list()).items
    } catch (error) {
      loadError.value = error instanceof ApiError ? error.message : 'The scenarios could not be loaded.'
    } finally {
      loading.value = false
    }
  }

  /** The picked scenarios that sim-core accepts, with their balance; a stored scenario it refuses is left out and named. */
  const compared = computed(() => {
    const ok: ComparedScenario[] = []
    const refused: string[] = []
    for (const id of pickedIds.value) {
      const row = rows.value.find((r) => r.id === id)
      if (!row) continue
      const parsed = parseScenario(row.data)
      if (parsed.ok) ok.push({ row, scenario: parsed.scenario, balance: computeBalance(parsed.scenario) })
      else refused.push(row.name)
    }
    return { ok, refused }
  })

  // Two sweeps of the same axes, one surface subtracted from the other.
  const sweeps = ref<Sweep[]>([])
  const sweepsError = ref<string | null>(null)
  const firstSweepId = ref<string | null>(null)
  const secondSweepId = ref<string | null>(null)
  const metric = ref<'crackBoostPa' | 'fullOpenBoostPa'>('crackBoostPa')
  const difference = shallowRef<SurfaceDifference | null>(null)
  const differenceLoading = ref(false)

  async function fetchSweeps(): Promise<void> {
    sweepsError.value = null
    try {
      sweeps.value = (await compareApi.sweeps()).items.filter((s) => s.state === 'done' && s.axes.length >= 2)
    } catch (error) {
      sweepsError.value = error instanceof ApiError ? error.message : 'The sweeps could not be loaded.'
    }
  }

  async function computeDifference(): Promise<void> {
    const a = firstSweepId.value
    const b = secondSweepId.value
    difference.value = null
    if (!a || !b) return
    if (a === b) {
      difference.value = { ok: false, reason: 'Pick two different sweeps.' }
      return
    }
    differenceLoading.value = true
    try {
      const [first, second] = await Promise.all([compareApi.surface(a, metric.value), compareApi.surface(b, metric.value)])
      difference.value = surfaceDifference(first, second)
    } catch (error) {
      difference.value = { ok: false, reason: error instanceof ApiError ? error.message : 'The surfaces could not be loaded.' }
    } finally {
      differenceLoading.value = false
    }
  }

  // The supply comparison.
  const supplyScenarioId = ref<string | null>(null)
  const setpointPa = ref<number>(Number.NaN)
  const bottle = reactive<BottleInputs>(defaultBottle())
  const tank = reactive<TankInputs>(defaultTank())
  const co2 = shallowRef<SupplyRun | null>(null)
  const compressor = shallowRef<SupplyRun | null>(null)
  const running = ref<'co2' | 'compressor' | null>(null)
  const runError = ref<string | null>(null)
  let client: PullClient | null = null

  const supplyBase = computed<Scenario | null>(() => {
    const row = rows.value.find((r) => r.id === supplyScenarioId.value)
    if (!row) return null
    const parsed = parseScenario(row.data)
    return parsed.ok ? parsed.scenario : null
  })

  /** A scenario picked for the supply comparison starts from its own regulator setpoint. */
  function pickSupplyScenario(id: string | null): void {
    supplyScenarioId.value = id
    co2.value = null
    compressor.value = null
    runError.value = null
    const base = supplyBase.value
    setpointPa.value = base ? scenarioSetpoint(base) : Number.NaN
  }

  const variants = computed(() => (supplyBase.value ? supplyVariants(supplyBase.value, setpointPa.value, { ...bottle }, { ...tank }) : null))

  /** Problems by field name (`regulatorSetpointPa`, `fillMassKg`, `cutInPa`): a field shared by both shows either's. */
  const issues = computed<Record<string, string>>(() => {
    const v = variants.value
    if (!v) return {}
    return { ...(v.compressor.ok ? {} : v.compressor.issues), ...(v.co2.ok ? {} : v.co2.issues) }
  })
  const canRun = computed(() => !!variants.value?.co2.ok && !!variants.value.compressor.ok && running.value === null)

  async function run(): Promise<void> {
    const v = variants.value
    if (!v || !v.co2.ok || !v.compressor.ok) return
    client ??= createPullClient()
    co2.value = null
    compressor.value = null
    runError.value = null
    try {
      // One after the other: the worker runs a single pull at a time, and a second run would end the first.
      running.value = 'co2'
      co2.value = { scenario: v.co2.scenario, result: (await client.run(v.co2.scenario)).result }
      running.value = 'compressor'
      compressor.value = { scenario: v.compressor.scenario, result: (await client.run(v.compressor.scenario)).result }
    } catch (cause) {
      if (cause instanceof PullCancelled) return
      runError.value = cause instanceof Error ? cause.message : 'The pulls could not be run.'
    } finally {
      running.value = null
    }
  }

  function cancel(): void {
    client?.cancel()
    running.value = null
  }

  function resetInputs(): void {
    Object.assign(bottle, defaultBottle())
    Object.assign(tank, defaultTank())
  }

  return {
    rows,
    loading,
    loadError,
    pickedIds,
    compared,
    fetchScenarios,
    sweeps,
    sweepsError,
    firstSweepId,
    secondSweepId,
    metric,
    difference,
    differenceLoading,
    fetchSweeps,
    computeDifference,
    supplyScenarioId,
    supplyBase,
    setpointPa,
    bottle,
    tank,
    variants,
    issues,
    canRun,
    co2,
    compressor,
    running,
    runError,
    pickSupplyScenario,
    run,
    cancel,
    resetInputs,
  }
})
