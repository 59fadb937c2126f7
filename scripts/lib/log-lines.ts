/** Pino's numeric levels (https://getpino.io, "Logger levels"). */
const LEVEL_NAMES: Record<number, string> = { 10: 'TRACE', 20: 'DEBUG', 30: 'INFO', 40: 'WARN', 50: 'ERROR', 60: 'FATAL' }

/** Fields every line carries or that the short form already shows; the rest are printed as key=value. */
const SHOWN = new Set(['level', 'time', 'pid', 'hostname', 'name', 'msg', 'req', 'res', 'responseTime', 'err', 'v'])

type Fields = Record<string, unknown>

const isRecord = (value: unknown): value is Fields => typeof value === 'object' && value !== null && !Array.isArray(value)

function scalar(value: unknown): string | undefined {
  if (typeof value === 'string') return /\s/.test(value) ? JSON.stringify(value) : value
  if (typeof value === 'number' || typeof value === 'boolean') return String(value)
  return undefined
}

/**
 * One pino JSON line as a short console line: UTC time, level, then for a request its method, URL,
 * status and milliseconds, the message, an error's message and any other plain fields. A line that is
 * not a pino record (a stack trace, a tool's own output) is returned unchanged.
 */
export function formatLogLine(line: string): string {
  if (!line.startsWith('{')) return line
  let record: unknown
  try {
    record = JSON.parse(line)
  } catch {
    return line
  }
  if (!isRecord(record) || typeof record.level !== 'number') return line

  const parts: string[] = []
  if (typeof record.time === 'number') parts.push(new Date(record.time).toISOString().slice(11, 23))
  parts.push((LEVEL_NAMES[record.level] ?? `L${record.level}`).padEnd(5))
  const req = isRecord(record.req) ? record.req : undefined
  const res = isRecord(record.res) ? record.res : undefined
  if (req && typeof req.method === 'string') parts.push(req.method)
  if (req && typeof req.url === 'string') parts.push(req.url)
  if (res && typeof res.statusCode === 'number') parts.push(String(res.statusCode))
  if (typeof record.responseTime === 'number') parts.push(`${Math.round(record.responseTime)}ms`)
  if (typeof record.msg === 'string' && record.msg !== '') parts.push(record.msg)
  if (isRecord(record.err) && typeof record.err.message === 'string') parts.push(`— ${record.err.message}`)
  for (const [key, value] of Object.entries(record)) {
    if (SHOWN.has(key)) continue
    const text = scalar(value)
    if (text !== undefined) parts.push(`${key}=${text}`)
  }
  return parts.join(' ')
}

/** The console keeps pino's JSON when LOG_FORMAT=json (for a log collector); otherwise the short form. */
export function consoleLineFormatter(env: NodeJS.ProcessEnv): ((line: string) => string) | undefined {
  return env.LOG_FORMAT === 'json' ? undefined : formatLogLine
}
