import { ApiError, apiErrorFromBody } from './api-error'
import { tokenStorage } from './token-storage'

export interface DownloadedFile {
  blob: Blob
  /** The name the server gave the file, or `fallbackName`. */
  filename: string
}

/** The file name of a `Content-Disposition: attachment; filename="…"` header (RFC 6266), UTF-8 form first. */
export function filenameFrom(header: string | null): string | null {
  if (!header) return null
  const extended = /filename\*\s*=\s*UTF-8''([^;]+)/i.exec(header)
  if (extended?.[1]) {
    try {
      return decodeURIComponent(extended[1].trim())
    } catch {
      // A malformed escape falls back to the plain name.
    }
  }
  const plain = /filename\s*=\s*"([^"]*)"|filename\s*=\s*([^;]+)/i.exec(header)
  const name = plain?.[1] ?? plain?.[2]
  return name ? name.trim() : null
}

/**
 * A file from the API with the token in the Authorization header, which a plain link cannot send: fetched
 * whole into a Blob for the page to save.
 */
export async function downloadFile(path: string, query: Record<string, string>, fallbackName: string): Promise<DownloadedFile> {
  const headers: Record<string, string> = {}
  const token = tokenStorage.get()
  if (token) headers.Authorization = `Bearer ${token}`
  const search = new URLSearchParams(query).toString()
  let response: Response
  try {
    response = await fetch(search ? `${path}?${search}` : path, { headers })
  } catch {
    throw new ApiError(0, 'network', 'Crackpoint cannot reach its server. Check the connection and try again.')
  }
  if (!response.ok) {
    let body: unknown
    try {
      body = JSON.parse(await response.text())
    } catch {
      body = undefined
    }
    throw apiErrorFromBody(response.status, body)
  }
  return { blob: await response.blob(), filename: filenameFrom(response.headers.get('Content-Disposition')) ?? fallbackName }
}
