import { ApiError, apiErrorFromBody } from './api-error'
import { createSseParser, type ServerSentEvent } from './sse-parser'
import { tokenStorage } from './token-storage'

/**
 * Reads a `text/event-stream` answer with fetch: EventSource cannot send the Authorization header. Resolves
 * when the server ends the stream, rejects with an ApiError when it answers with an error instead (a 404
 * keeps its status so a caller can fall back to something else), and with the AbortError when `signal` aborts.
 */
export async function readEventStream(
  path: string,
  onEvent: (event: ServerSentEvent) => void,
  signal?: AbortSignal,
): Promise<void> {
  const headers: Record<string, string> = { Accept: 'text/event-stream' }
  const token = tokenStorage.get()
  if (token) headers.Authorization = `Bearer ${token}`

  let response: Response
  try {
    response = await fetch(path, { headers, signal, cache: 'no-store' })
  } catch (cause) {
    if (cause instanceof DOMException && cause.name === 'AbortError') throw cause
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
  if (!response.body) throw new ApiError(0, 'network', 'The server sent no stream.')

  const parser = createSseParser(onEvent)
  const reader = response.body.pipeThrough(new TextDecoderStream()).getReader()
  try {
    for (;;) {
      const { value, done } = await reader.read()
      if (done) break
      parser.push(value)
    }
  } catch (cause) {
    if (cause instanceof DOMException && cause.name === 'AbortError') throw cause
    if (signal?.aborted) throw new DOMException('The stream was stopped.', 'AbortError')
    throw new ApiError(0, 'network', 'The connection to the server dropped.')
  } finally {
    parser.end()
    reader.releaseLock()
  }
}
