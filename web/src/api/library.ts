import { request } from './http'
import type { ListResult } from './types'

export type LibraryKindKey = 'wastegates' | 'springs' | 'turbos' | 'engines' | 'supplies'

/** One part of the workspace's hardware library; `data` is sim-core's section for it (SI). */
export interface LibraryRow {
  id: string
  name: string
  notes: string
  data: Record<string, unknown>
  version: number
  archived: boolean
  archivedAt: string | null
  createdBy: string | null
  updatedBy: string | null
  createdAt: string
  updatedAt: string
}

/** The list query the API takes (api/src/schemas/library.ts). */
export interface LibraryListQuery {
  q?: string
  archived?: 'false' | 'true' | 'all'
  kind?: string
  sort?: string
  order?: 'asc' | 'desc'
  limit?: number
  offset?: number
}

export interface LibraryWrite {
  name?: string
  notes?: string
  data?: unknown
  archived?: boolean
}

const base = (kind: LibraryKindKey) => `/api/library/${kind}`

export const libraryApi = {
  list(kind: LibraryKindKey, query: LibraryListQuery = {}, signal?: AbortSignal): Promise<ListResult<LibraryRow>> {
    return request(base(kind), { query: { ...query }, signal })
  },
  get(kind: LibraryKindKey, id: string): Promise<{ item: LibraryRow }> {
    return request(`${base(kind)}/${id}`)
  },
  create(kind: LibraryKindKey, body: { name: string; notes: string; data: unknown }): Promise<{ item: LibraryRow }> {
    return request(base(kind), { method: 'POST', body })
  },
  /** The version must be the one last read; the API answers 409 when someone changed the part since. */
  update(kind: LibraryKindKey, id: string, body: LibraryWrite & { version: number }): Promise<{ item: LibraryRow }> {
    return request(`${base(kind)}/${id}`, { method: 'PATCH', body })
  },
  /** Refused with 409 `in_use`, naming the scenarios built from the part. */
  remove(kind: LibraryKindKey, id: string): Promise<void> {
    return request(`${base(kind)}/${id}`, { method: 'DELETE' })
  },
}
