import { computed, ref } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import {
  datalogsApi,
  DATALOG_QUANTITIES,
  type DatalogFit,
  type DatalogMapping,
  type DatalogOverlay,
  type DatalogRow,
  type DatalogSeries,
} from '@/api/datalogs'
import { scenariosApi } from '@/api/scenarios'
import type { ScenarioRow } from '@/api/types'
import { useSessionStore } from './session'

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

/** The mapping being edited: every quantity present, '' for a column left out. */
export type MappingDraft = Record<(typeof DATALOG_QUANTITIES)[number], ColumnDraft>
export interface ColumnDraft {
  column: string
  unit: string
}

export function draftOf(mapping: DatalogMapping): MappingDraft {
  const draft = {} as MappingDraft
  for (const q of DATALOG_QUANTITIES) {
    const choice = mapping[q]
    draft[q] = { column: choice?.column ?? '', unit: choice?.unit ?? '' }
  }
  return draft
}

/**
 * Datalogs: the workspace's list, the one selected with its series, its mapping being confirmed, and the
 * overlay and fit against a chosen scenario. API errors are kept by the field they name (`file`,
 * `boost.column`, `scenarioId`, …) so the page shows each beside its own field.
 */
export const useDatalogStore = defineStore('datalog', () => {
  const session = useSessionStore()
  const items = ref<DatalogRow[]>([])
  const scenarios = ref<ScenarioRow[]>([])
  const loading = ref(false)
  const loadError = ref<string | null>(null)
  const selected = ref<DatalogRow | null>(null)
  const series = ref<DatalogSeries | null>(null)
  const uploading = ref(false)
  const uploadError = ref<string | null>(null)
  const savingMapping = ref(false)
  const mappingError = ref<string | null>(null)
  const fieldErrors = ref<Record<string, string>>({})
  const overlay = ref<DatalogOverlay | null>(null)
  const fitResult = ref<DatalogFit | null>(null)
  /** The scenario the overlay and the fit were computed against (the fit's copy is another one). */
  const comparedScenarioId = ref<string | null>(null)
  const busy = ref<'overlay' | 'fit' | null>(null)
  const actionError = ref<string | null>(null)

  const canCompute = computed(() => session.canCompute)

  function clearResults(): void {
    overlay.value = null
    fitResult.value = null
    actionError.value = null
  }

  async function load(): Promise<void> {
    loading.value = true
    loadError.value = null
    try {
      const [logs, scenarioList] = await Promise.all([datalogsApi.list(), scenariosApi.list()])
      items.value = logs.items
      scenarios.value = scenarioList.items
    } catch (error) {
      loadError.value = messageOf(error, 'The logs could not be loaded.')
    } finally {
      loading.value = false
    }
  }

  async function select(id: string): Promise<void> {
    clearResults()
    fieldErrors.value = {}
    mappingError.value = null
    try {
      const answer = await datalogsApi.get(id)
      selected.value = answer.datalog
      series.value = answer.series
    } catch (error) {
      loadError.value = messageOf(error, 'The log could not be opened.')
    }
  }

  async function upload(file: File): Promise<boolean> {
    uploading.value = true
    uploadError.value = null
    fieldErrors.value = {}
    try {
      const { datalog } = await datalogsApi.upload(file)
      items.value = [datalog, ...items.value]
      await select(datalog.id)
      return true
    } catch (error) {
      uploadError.value = error instanceof ApiError ? (error.fields.file ? `${file.name} ${error.fields.file}.` : error.message) : 'The file could not be uploaded.'
      return false
    } finally {
      uploading.value = false
    }
  }

  async function saveMapping(draft: MappingDraft): Promise<boolean> {
    const current = selected.value
    if (!current) return false
    const choice = (q: (typeof DATALOG_QUANTITIES)[number]) => (draft[q].column === '' ? null : { column: draft[q].column, unit: draft[q].unit })
    const mapping = {
      time: { column: draft.time.column, unit: draft.time.unit },
      boost: { column: draft.boost.column, unit: draft.boost.unit },
      rpm: choice('rpm'),
      drive: choice('drive'),
      duty: choice('duty'),
      supply: choice('supply'),
    }
    savingMapping.value = true
    mappingError.value = null
    fieldErrors.value = {}
    try {
      const answer = await datalogsApi.saveMapping(current.id, mapping)
      selected.value = answer.datalog
      series.value = answer.series
      items.value = items.value.map((item) => (item.id === answer.datalog.id ? answer.datalog : item))
      clearResults()
      return true
    } catch (error) {
      if (error instanceof ApiError) {
        fieldErrors.value = { ...error.fields }
        mappingError.value = error.message
      } else mappingError.value = 'The mapping could not be saved.'
      return false
    } finally {
      savingMapping.value = false
    }
  }

  async function remove(id: string): Promise<void> {
    actionError.value = null
    try {
      await datalogsApi.remove(id)
      items.value = items.value.filter((item) => item.id !== id)
      if (selected.value?.id === id) {
        selected.value = null
        series.value = null
        clearResults()
      }
    } catch (error) {
      actionError.value = messageOf(error, 'The log could not be deleted.')
    }
  }

  async function runOverlay(scenarioId: string): Promise<void> {
    const current = selected.value
    if (!current) return
    busy.value = 'overlay'
    actionError.value = null
    fieldErrors.value = {}
    try {
      overlay.value = (await datalogsApi.overlay(current.id, scenarioId)).overlay
      comparedScenarioId.value = scenarioId
    } catch (error) {
      if (error instanceof ApiError) fieldErrors.value = { ...error.fields }
      actionError.value = messageOf(error, 'The overlay could not be computed.')
    } finally {
      busy.value = null
    }
  }

  /** Fits the selected log to the scenario; the plot then shows the best pull beside the log. */
  async function runFit(scenarioId: string): Promise<void> {
    const current = selected.value
    if (!current) return
    busy.value = 'fit'
    actionError.value = null
    fieldErrors.value = {}
    try {
      const result = await datalogsApi.fit(current.id, scenarioId)
      fitResult.value = result
      comparedScenarioId.value = scenarioId
      if (result.scenario) scenarios.value = [result.scenario, ...scenarios.value]
    } catch (error) {
      if (error instanceof ApiError) fieldErrors.value = { ...error.fields }
      actionError.value = messageOf(error, 'The fit could not be computed.')
    } finally {
      busy.value = null
    }
  }

  return {
    items,
    scenarios,
    loading,
    loadError,
    selected,
    series,
    uploading,
    uploadError,
    savingMapping,
    mappingError,
    fieldErrors,
    overlay,
    fitResult,
    comparedScenarioId,
    busy,
    actionError,
    canCompute,
    load,
    select,
    upload,
    saveMapping,
    remove,
    runOverlay,
    runFit,
  }
})
