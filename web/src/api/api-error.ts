/** An expected failure answered by the API (or the network), in the shape the API documents. */
export class ApiError extends Error {
  readonly status: number
  readonly code: string
  readonly fields: Readonly<Record<string, string>>

  constructor(status: number, code: string, message: string, fields: Record<string, string> = {}) {
    super(message)
    this.name = 'ApiError'
    this.status = status
    this.code = code
    this.fields = fields
  }
}

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value)
}

/** Reads `{ error: { code, message, fields } }`; anything else becomes a plain message naming the status. */
export function apiErrorFromBody(status: number, body: unknown): ApiError {
  const error = isRecord(body) ? body.error : undefined
  if (isRecord(error) && typeof error.code === 'string' && typeof error.message === 'string') {
    const fields: Record<string, string> = {}
    if (isRecord(error.fields)) {
      for (const [path, message] of Object.entries(error.fields)) {
        if (typeof message === 'string') fields[path] = message
      }
    }
    return new ApiError(status, error.code, error.message, fields)
  }
  return new ApiError(status, `http_${status}`, `The server answered with status ${status}.`)
}
