import { computed, reactive, ref } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { libraryApi, type LibraryKindKey, type LibraryRow } from '@/api/library'
import { checkPart, LIBRARY_KINDS, switchShape } from '@/composables/library-kinds'

export interface LibraryTableQuery {
  q: string
  archived: 'false' | 'true' | 'all'
  sort: string
  order: 'asc' | 'desc'
  page: number
  perPage: number
}

const FIRST_PAGE: LibraryTableQuery = { q: '', archived: 'false', sort: 'name', order: 'asc', page: 1, perPage: 25 }

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

/**
 * The workspace's hardware library: one page of one kind of part (searched, sorted and paged by the API),
 * the part open in the form with sim-core's check of it, and the workspace's wastegates for bench-tested springs.
 */
export const useLibraryStore = defineStore('library', () => {
  const kind = ref<LibraryKindKey>('wastegates')
  const query = reactive<LibraryTableQuery>({ ...FIRST_PAGE })
  const items = ref<LibraryRow[]>([])
  const total = ref(0)
  const loading = ref(false)
  const listError = ref<string | null>(null)
  let listAbort: AbortController | null = null

  /** The part open in the form: null while the form is shut; `row` null for a new part. */
  const editing = ref<{ row: LibraryRow | null } | null>(null)
  const draftName = ref('')
  const draftNotes = ref('')
  const draft = ref<Record<string, unknown>>({})
  const serverErrors = ref<Record<string, string>>({})
  const saving = ref(false)
  const saveError = ref<string | null>(null)

  /** A refused delete or archive, worded by the API (409 names the scenarios built from the part). */
  const actionError = ref<{ row: LibraryRow; message: string; inUse: boolean } | null>(null)

  const gates = ref<LibraryRow[]>([])

  const spec = computed(() => LIBRARY_KINDS[kind.value])
  const check = computed(() => checkPart(spec.value, draft.value))

  /** Problems by data field (`valveDiameterM`) or `name`, the live check first, then the last refused save. */
  const issues = computed<Record<string, string>>(() => {
    const byField: Record<string, string> = { ...serverErrors.value }
    if (!check.value.ok) for (const [path, message] of Object.entries(check.value.issues)) byField[path] ??= message
    return byField
  })

  async function fetchPage(): Promise<void> {
    listAbort?.abort()
    const abort = new AbortController()
    listAbort = abort
    loading.value = true
    listError.value = null
    try {
      const result = await libraryApi.list(
        kind.value,
        {
          q: query.q.trim() || undefined,
          archived: query.archived,
          sort: query.sort,
          order: query.order,
          limit: query.perPage,
          offset: (query.page - 1) * query.perPage,
        },
        abort.signal,
      )
      items.value = result.items
      total.value = result.total
    } catch (error) {
      if (error instanceof DOMException && error.name === 'AbortError') return
      listError.value = messageOf(error, `The ${spec.value.title.toLowerCase()} could not be loaded.`)
    } finally {
      if (listAbort === abort) loading.value = false
    }
  }

  /** Another kind of part starts from its first page, sorted by name. */
  function showKind(next: LibraryKindKey): void {
    if (kind.value === next) return
    kind.value = next
    Object.assign(query, FIRST_PAGE)
    items.value = []
    total.value = 0
    editing.value = null
    actionError.value = null
  }

  function openNew(): void {
    editing.value = { row: null }
    draftName.value = ''
    draftNotes.value = ''
    draft.value = spec.value.starter()
    serverErrors.value = {}
    saveError.value = null
  }

  function openRow(row: LibraryRow): void {
    editing.value = { row }
    draftName.value = row.name
    draftNotes.value = row.notes
    // The row is reactive state: a JSON copy is a plain object the form may change freely.
    draft.value = JSON.parse(JSON.stringify(row.data)) as Record<string, unknown>
    serverErrors.value = {}
    saveError.value = null
  }

  function close(): void {
    editing.value = null
  }

  function forget(field: string): void {
    if (field in serverErrors.value) {
      const { [field]: _answered, ...rest } = serverErrors.value
      serverErrors.value = rest
    }
  }

  /** NaN (an emptied field) removes an optional number so the model uses its own rule, and leaves a required one to be flagged. */
  function setNumber(field: string, value: number, optional: boolean): void {
    const next = { ...draft.value }
    if (Number.isNaN(value) && optional) delete next[field]
    else next[field] = Number.isNaN(value) ? undefined : value
    draft.value = next
    forget(field)
  }

  function setShape(value: string): void {
    draft.value = switchShape(spec.value, draft.value, value)
    serverErrors.value = {}
  }

  function setName(value: string): void {
    draftName.value = value
    forget('name')
  }

  async function save(): Promise<boolean> {
    const open = editing.value
    const checked = check.value
    if (!open || !checked.ok) return false
    if (!draftName.value.trim()) {
      serverErrors.value = { ...serverErrors.value, name: 'must not be empty' }
      return false
    }
    saving.value = true
    saveError.value = null
    serverErrors.value = {}
    try {
      const body = { name: draftName.value.trim(), notes: draftNotes.value, data: checked.data }
      if (open.row) await libraryApi.update(kind.value, open.row.id, { ...body, version: open.row.version })
      else await libraryApi.create(kind.value, body)
      editing.value = null
      await fetchPage()
      return true
    } catch (error) {
      if (error instanceof ApiError) {
        const byField: Record<string, string> = {}
        for (const [path, message] of Object.entries(error.fields)) byField[path.replace(/^data\./, '')] = message
        serverErrors.value = byField
        saveError.value =
          error.code === 'version_conflict'
            ? `${error.message} Your edits are still in the form.`
            : Object.keys(byField).length > 0
              ? 'The part was not saved: see the fields marked below.'
              : error.message
      } else {
        saveError.value = `The ${spec.value.singular} could not be saved.`
      }
      return false
    } finally {
      saving.value = false
    }
  }

  async function setArchived(row: LibraryRow, archived: boolean): Promise<void> {
    actionError.value = null
    try {
      await libraryApi.update(kind.value, row.id, { archived, version: row.version })
      await fetchPage()
    } catch (error) {
      actionError.value = { row, inUse: false, message: messageOf(error, `The ${spec.value.singular} could not be changed.`) }
    }
  }

  async function remove(row: LibraryRow): Promise<boolean> {
    actionError.value = null
    try {
      await libraryApi.remove(kind.value, row.id)
      await fetchPage()
      return true
    } catch (error) {
      const inUse = error instanceof ApiError && error.status === 409 && error.code === 'in_use'
      actionError.value = { row, inUse, message: messageOf(error, `The ${spec.value.singular} could not be deleted.`) }
      return false
    }
  }

  /** The workspace's wastegates, for turning a spring's bench crack pressure into a seat force on one of them. */
  async function fetchGates(): Promise<void> {
    try {
      gates.value = (await libraryApi.list('wastegates', { limit: 200, sort: 'name' })).items
    } catch {
      gates.value = []
    }
  }

  return {
    kind,
    spec,
    query,
    items,
    total,
    loading,
    listError,
    editing,
    draftName,
    draftNotes,
    draft,
    check,
    issues,
    saving,
    saveError,
    actionError,
    gates,
    fetchPage,
    showKind,
    openNew,
    openRow,
    close,
    setNumber,
    setShape,
    setName,
    save,
    setArchived,
    remove,
    fetchGates,
  }
})
