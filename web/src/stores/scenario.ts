import { computed, ref, shallowRef, toRaw } from 'vue'
import { defineStore } from 'pinia'
import {
  computeBalance,
  controlSchema,
  downstreamSchema,
  parseScenario,
  setAtPath,
  supplySchema,
  wastegateAreas,
  wastegateSchema,
  type BalanceResult,
  type Control,
  type FieldIssue,
  type Scenario,
  type ScenarioInput,
  type SolveUnknown,
  type Goal,
  type Supply,
  type WastegateAreas,
} from '@crackpoint/sim-core'
import { ApiError } from '@/api/api-error'
import { deepEqual } from '@/composables/deep-equal'
import { scenariosApi } from '@/api/scenarios'
import type { ScenarioRow } from '@/api/types'

type Downstream = Scenario['exhaust']['downstream']

/** sim-core's limit on nested springs. */
export const MAX_SPRINGS = 3

/**
 * Starting values for an arrangement picked for the first time; the user edits them. Half duty and a
 * 50 % bleed sit mid-range; 20 psi (137 895 Pa) is a common street boost target (common practice, no source).
 */
const CONTROL_STARTS: Readonly<Record<Control['kind'], unknown>> = {
  none: { kind: 'none' },
  'bottom-boost': { kind: 'bottom-boost' },
  'top-supply': { kind: 'top-supply' },
  both: { kind: 'both' },
  'bleed-top': { kind: 'bleed-top', fraction: 0.5 },
  'solenoid-3port': { kind: 'solenoid-3port', chamber: 'bottom', duty: 0.5 },
  'solenoid-4port': { kind: 'solenoid-4port', duty: 0.5 },
  'closed-loop': { kind: 'closed-loop', targetBoostPa: 137_895 },
}

/** A muffled dump: about 10 kPa behind the valve at 0.1 kg/s of gate flow (common practice, no source). */
const RESTRICTION_START = 1e6

/** An inner spring of 10 lbf seat and 10 lbf/in (44.48 N, 1751 N/m; common practice, no source). */
const NESTED_SPRING_START = { from: 'seat', seatForceN: 44.48, rateNPerM: 1751 } as const

/** The scenario's tables over engine speed. */
export type RpmTablePath = 'control.targetByRpm' | 'engine.volumetricEfficiencyByRpm'

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

  /**
   * The wastegate's net areas from its own inputs, even while another section has a problem, so the areas
   * picture and a bench-tested spring's seat force stay live.
   */
  const draftAreas = computed<WastegateAreas | null>(() => {
    const parsed = wastegateSchema.safeParse(draft.value?.wastegate)
    return parsed.success ? wastegateAreas(parsed.data) : null
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
    remembered.control.clear()
    remembered.supply.clear()
    remembered.downstream.clear()
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

  /** A saved scenario to read (the setup sheet), leaving the one open for editing alone. */
  async function fetchRow(id: string): Promise<ScenarioRow> {
    return (await scenariosApi.get(id)).scenario
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

  function clearFieldError(path: string): void {
    if (path in fieldErrors.value) {
      const { [path]: _answered, ...rest } = fieldErrors.value
      fieldErrors.value = rest
    }
  }

  function setNumber(path: string, value: number): void {
    if (!draft.value) return
    draft.value = setAtPath(draft.value, path, value)
    clearFieldError(path)
  }

  /** An optional number: NaN (an emptied field) removes it, so the model falls back to its own rule. */
  function setOptionalNumber(path: string, value: number): void {
    if (!draft.value) return
    if (!Number.isNaN(value)) {
      setNumber(path, value)
      return
    }
    const keys = path.split('.')
    const last = keys.pop()
    let node: unknown = draft.value
    for (const key of keys) node = node !== null && typeof node === 'object' ? (node as Record<string, unknown>)[key] : undefined
    if (last !== undefined && node !== null && typeof node === 'object') delete (node as Record<string, unknown>)[last]
    clearFieldError(path)
  }

  /** Earlier settings of each kind, so switching an arrangement away and back keeps what was typed. */
  const remembered = { control: new Map<string, Control>(), supply: new Map<string, Supply>(), downstream: new Map<string, Downstream>() }

  function setArrangement(kind: Control['kind']): void {
    const d = draft.value
    if (!d || d.control.kind === kind) return
    remembered.control.set(d.control.kind, structuredClone(toRaw(d.control)) as Control)
    d.control = remembered.control.get(kind) ?? controlSchema.parse(CONTROL_STARTS[kind])
    // "Top port on a regulated supply" means a bottle or a tank; boost itself on the top stays a choice.
    if ((kind === 'top-supply' || kind === 'both') && d.supply.kind === 'boost') {
      setSupplyKind('co2')
    }
  }

  function setControlOption(key: 'chamber' | 'bottomOnBoost', value: 'bottom' | 'top' | boolean): void {
    const c = draft.value?.control
    if (!c) return
    if (key === 'chamber' && c.kind === 'solenoid-3port' && (value === 'bottom' || value === 'top')) c.chamber = value
    if (key === 'bottomOnBoost' && c.kind === 'bleed-top' && typeof value === 'boolean') c.bottomOnBoost = value
  }

  function setSupplyKind(kind: Supply['kind']): void {
    const d = draft.value
    if (!d || d.supply.kind === kind) return
    remembered.supply.set(d.supply.kind, structuredClone(toRaw(d.supply)) as Supply)
    const earlier = remembered.supply.get(kind)
    if (earlier) {
      d.supply = earlier
      return
    }
    // A regulated supply keeps the setpoint the user already chose; 10 psi is only a starting value to edit.
    const setpoint = d.supply.kind === 'boost' ? 68_948 : d.supply.regulatorSetpointPa
    d.supply = supplySchema.parse(kind === 'boost' ? { kind } : { kind, regulatorSetpointPa: setpoint })
  }

  /**
   * Puts a target solve's answer in the draft: a seat force as one spring of the springs' total rate (nested springs
   * are answered as their total), a setpoint, a bleed fraction or a solenoid duty.
   */
  function applySolved(unknown: SolveUnknown, value: number, goal?: Goal): void {
    const d = draft.value
    if (!d) return
    // The scenario records what it was set up for; the setup sheet says it.
    if (goal) d.goal = { ...goal }
    if (unknown === 'seat-force') {
      const current = live.value?.ok ? live.value.scenario : null
      const rateNPerM = current ? current.springs.reduce((sum, spring) => sum + spring.rateNPerM, 0) : 0
      d.springs = [{ from: 'seat', seatForceN: value, rateNPerM }]
      clearFieldError('springs')
      return
    }
    const path = unknown === 'setpoint' ? 'supply.regulatorSetpointPa' : unknown === 'bleed-fraction' ? 'control.fraction' : 'control.duty'
    setNumber(path, value)
  }

  /** Whether the session the gas budget plans for vents the supply's lines after each pull. */
  function setVentAfterEachPull(value: boolean): void {
    const supply = draft.value?.supply
    if (supply && supply.kind !== 'boost') supply.ventAfterEachPull = value
  }

  function setDownstreamKind(kind: Downstream['kind']): void {
    const e = draft.value?.exhaust
    if (!e) return
    const current = e.downstream ?? { kind: 'vented' }
    if (current.kind === kind) return
    remembered.downstream.set(current.kind, structuredClone(toRaw(current)) as Downstream)
    e.downstream =
      remembered.downstream.get(kind) ??
      downstreamSchema.parse(kind === 'restricted' ? { kind, coefficientPaPerKg2S2: RESTRICTION_START } : { kind })
  }

  function setChoice(path: 'wastegate.actuatorKind', value: 'diaphragm' | 'piston'): void
  function setChoice(path: 'exhaust.mode', value: 'ratio' | 'turbine'): void
  function setChoice(path: string, value: string): void {
    const d = draft.value
    if (!d) return
    if (path === 'wastegate.actuatorKind' && (value === 'diaphragm' || value === 'piston')) d.wastegate.actuatorKind = value
    if (path === 'exhaust.mode' && (value === 'ratio' || value === 'turbine')) d.exhaust.mode = value
  }

  /** A nested spring goes inside the others; its force and rate add to theirs (MODEL.md §1). */
  function addSpring(): void {
    const d = draft.value
    if (!d || d.springs.length >= MAX_SPRINGS) return
    d.springs = [...d.springs, { ...NESTED_SPRING_START }]
  }

  function removeSpring(index: number): void {
    const d = draft.value
    if (!d || d.springs.length <= 1 || index < 0 || index >= d.springs.length) return
    d.springs = d.springs.filter((_, i) => i !== index)
    fieldErrors.value = Object.fromEntries(Object.entries(fieldErrors.value).filter(([path]) => !path.startsWith('springs.')))
  }

  /**
   * A seat-force spring and a bench-test spring are two ways to give the same preload:
   * F0 = p_bench · (A_p − A_s) (MODEL.md §1), so switching keeps the crack point where it was.
   */
  function setSpringSource(index: number, from: 'seat' | 'bench'): void {
    const d = draft.value
    const spring = d?.springs[index]
    if (!d || !spring || spring.from === from) return
    const bottomM2 = draftAreas.value?.bottomM2 ?? Number.NaN
    const next =
      from === 'seat'
        ? { from, seatForceN: spring.from === 'bench' ? spring.benchCrackPressurePa * bottomM2 : Number.NaN, rateNPerM: spring.rateNPerM }
        : { from, benchCrackPressurePa: spring.from === 'seat' ? spring.seatForceN / bottomM2 : Number.NaN, rateNPerM: spring.rateNPerM }
    d.springs = d.springs.map((s, i) => (i === index ? next : s))
  }

  /** A whole rpm table at once (rows added, removed or reordered); undefined removes it, so the single figure applies. */
  function setRpmTable(path: RpmTablePath, rows: Record<string, number>[] | undefined): void {
    const d = draft.value
    if (!d) return
    if (path === 'control.targetByRpm') {
      if (d.control.kind !== 'closed-loop') return
      if (rows) d.control.targetByRpm = rows as { rpm: number; boostPa: number }[]
      else delete d.control.targetByRpm
    } else if (rows) {
      d.engine.volumetricEfficiencyByRpm = rows as { rpm: number; volumetricEfficiency: number }[]
    } else {
      delete d.engine.volumetricEfficiencyByRpm
    }
    fieldErrors.value = Object.fromEntries(Object.entries(fieldErrors.value).filter(([key]) => !key.startsWith(path)))
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
    open,
    load,
    fetchRow,
    create,
    save,
    discardEdits,
    draftAreas,
    setNumber,
    setOptionalNumber,
    setArrangement,
    setControlOption,
    setSupplyKind,
    setDownstreamKind,
    setVentAfterEachPull,
    applySolved,
    setChoice,
    addSpring,
    removeSpring,
    setSpringSource,
    setRpmTable,
  }
})
