import { computed, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import {
  computeBalance,
  parseScenario,
  setAtPath,
  type BalanceResult,
  type FieldIssue,
  type Scenario,
  type ScenarioInput,
} from '@crackpoint/sim-core'
import { ApiError } from '@/api/api-error'
import { deepEqual } from '@/composables/deep-equal'
import { scenariosApi } from '@/api/scenarios'
import type { ScenarioRow } from '@/api/types'

export type LiveBalance = { ok: true; scenario: Scenario; balance: BalanceResult } | { ok: false; issues: FieldIssue[] }

function clone<T>(value: T): T {
  return structuredClone(value)
}

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

/**
 * The workspace's scenarios and the one open for editing. The draft is a plain copy the form writes
 * into; the balance is recomputed from it in the browser on every change, and only a draft that
 * sim-core accepts can be saved.
 */
export const useScenarioStore = defineStore('scenario', () => {
  const items = ref<ScenarioRow[]>([])
  const total = ref(0)
  const listLoading = ref(false)
  const listError = ref<string | null>(null)

  const current = shallowRef<ScenarioRow | null>(null)
  const draft = ref<ScenarioInput | null>(null)
  const draftName = ref('')
  const loading = ref(false)
  const loadError = ref<string | null>(null)
  const saving = ref(false)
  const saveError = ref<string | null>(null)
  /** Set when the server holds a newer version than the one the draft started from. */
  const conflict = ref(false)
  const fieldErrors = ref<Record<string, string>>({})

  const live = computed<LiveBalance | null>(() => {
    if (!draft.value) return null
    const parsed = parseScenario(draft.value)
    if (!parsed.ok) return parsed
    return { ok: true, scenario: parsed.scenario, balance: computeBalance(parsed.scenario) }
  })

  /** Problems by dotted scenario path, from the live check and from the last rejected save. */
  const issues = computed<Record<string, string>>(() => {
    const byPath: Record<string, string> = { ...fieldErrors.value }
    if (live.value && !live.value.ok) {
      for (const issue of live.value.issues) byPath[issue.path] ??= issue.message
    }
    return byPath
  })

  const dirty = computed(() => {
    if (!current.value || !draft.value || !live.value) return false
    if (draftName.value.trim() !== current.value.name) return true
    if (!live.value.ok) return true
    return !deepEqual(live.value.scenario, current.value.data)
  })

  async function fetchList(): Promise<void> {
    listLoading.value = true
    listError.value = null
    try {
      const result = await scenariosApi.list()
      items.value = result.items
      total.value = result.total
    } catch (error) {
      listError.value = messageOf(error, 'The scenarios could not be loaded.')
    } finally {
      listLoading.value = false
    }
  }

  function open(row: ScenarioRow): void {
    current.value = row
    draft.value = clone(row.data)
    draftName.value = row.name
    conflict.value = false
    saveError.value = null
    fieldErrors.value = {}
  }

  async function load(id: string): Promise<void> {
    loading.value = true
    loadError.value = null
    // Another scenario's form must not show, even for a moment, under this one's address.
    if (current.value && current.value.id !== id) {
      current.value = null
      draft.value = null
    }
    try {
      open((await scenariosApi.get(id)).scenario)
    } catch (error) {
      current.value = null
      draft.value = null
      loadError.value =
        error instanceof ApiError && error.status === 404
          ? 'This scenario does not exist in your workspace.'
          : messageOf(error, 'The scenario could not be loaded.')
    } finally {
      loading.value = false
    }
  }

  async function create(name: string): Promise<ScenarioRow> {
    const { scenario } = await scenariosApi.create(name.trim())
    items.value = [scenario, ...items.value]
    total.value += 1
    return scenario
  }

  /** Sends the checked draft with the version it started from; a stale version keeps the edits. */
  async function save(): Promise<boolean> {
    const row = current.value
    const checked = live.value
    if (!row || !checked || !checked.ok) return false
    saving.value = true
    saveError.value = null
    fieldErrors.value = {}
    try {
      const { scenario } = await scenariosApi.update(row.id, {
        name: draftName.value.trim(),
        data: checked.scenario,
        version: row.version,
      })
      current.value = scenario
      draft.value = clone(scenario.data)
      draftName.value = scenario.name
      conflict.value = false
      const index = items.value.findIndex((item) => item.id === scenario.id)
      if (index >= 0) items.value.splice(index, 1, scenario)
      return true
    } catch (error) {
      if (error instanceof ApiError && error.status === 409) {
        conflict.value = true
        saveError.value =
          'Someone saved this scenario after you opened it, so your save was not applied. Your edits are still in the form: reload to see the newer version, then make them again.'
      } else if (error instanceof ApiError && error.status === 400) {
        const byPath: Record<string, string> = {}
        for (const [path, message] of Object.entries(error.fields)) byPath[path.replace(/^data\./, '')] = message
        fieldErrors.value = byPath
        saveError.value = error.message
      } else {
        saveError.value = messageOf(error, 'The scenario could not be saved.')
      }
      return false
    } finally {
      saving.value = false
    }
  }

  function discardEdits(): void {
    if (current.value) open(current.value)
  }

  function setNumber(path: string, value: number): void {
    if (!draft.value) return
    draft.value = setAtPath(draft.value, path, value)
    if (path in fieldErrors.value) {
      const { [path]: _answered, ...rest } = fieldErrors.value
      fieldErrors.value = rest
    }
  }

  /** The four arrangements of the thin path; the top port needs a regulated supply, CO₂ the usual one. */
  function setArrangement(kind: 'none' | 'bottom-boost' | 'top-supply' | 'both'): void {
    const d = draft.value
    if (!d) return
    d.control = { kind }
    if ((kind === 'top-supply' || kind === 'both') && d.supply.kind === 'boost') {
      setSupplyKind('co2')
    }
  }

  function setSupplyKind(kind: 'boost' | 'co2' | 'compressor'): void {
    const d = draft.value
    if (!d || d.supply.kind === kind) return
    if (kind === 'boost') {
      d.supply = { kind }
      return
    }
    // A regulated supply keeps the setpoint the user already chose; 10 psi is only a starting value to edit.
    const setpoint = d.supply.kind === 'boost' ? 68_948 : d.supply.regulatorSetpointPa
    d.supply = { kind, regulatorSetpointPa: setpoint }
  }

  /**
   * A seat-force spring and a bench-test spring are two ways to give the same preload:
   * F0 = p_bench · (A_p − A_s) (MODEL.md §1), so switching keeps the crack point where it was.
   */
  function setSpringSource(from: 'seat' | 'bench'): void {
    const d = draft.value
    const spring = d?.springs[0]
    if (!d || !spring || spring.from === from) return
    const bottomM2 = live.value?.ok ? live.value.balance.areas.bottomM2 : Number.NaN
    const first =
      from === 'seat'
        ? { from, seatForceN: spring.from === 'bench' ? spring.benchCrackPressurePa * bottomM2 : Number.NaN, rateNPerM: spring.rateNPerM }
        : { from, benchCrackPressurePa: spring.from === 'seat' ? spring.seatForceN / bottomM2 : Number.NaN, rateNPerM: spring.rateNPerM }
    d.springs = [first, ...d.springs.slice(1)]
  }

  return {
    items,
    total,
    listLoading,
    listError,
    current,
    draft,
    draftName,
    loading,
    loadError,
    saving,
    saveError,
    conflict,
    live,
    issues,
    dirty,
    fetchList,
    load,
    create,
    save,
    discardEdits,
    setNumber,
    setArrangement,
    setSupplyKind,
    setSpringSource,
  }
})
