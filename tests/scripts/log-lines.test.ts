import { describe, expect, it } from 'vitest'
import { consoleLineFormatter, formatLogLine } from '../../scripts/lib/log-lines.ts'

// 2026-12-02T02:40:05.123Z
const TIME = Date.UTC(2026, 11, 2, 2, 40, 5, 123)

describe('formatLogLine', () => {
  it('shortens a request line to time, level, method, URL, status, milliseconds and message', () => {
    const line = JSON.stringify({
      level: 30,
      time: TIME,
      pid: 4242,
      hostname: 'bench-pc',
      name: 'crackpoint-api',
      req: { id: 7, method: 'GET', url: '/api/sweeps?limit=20' },
      res: { statusCode: 200 },
      responseTime: 12.6,
      msg: 'request completed',
    })
    expect(formatLogLine(line)).toBe('02:40:05.123 INFO  GET /api/sweeps?limit=20 200 13ms request completed')
  })

  it('names the level of a failed request and the error it carried', () => {
    const line = JSON.stringify({
      level: 50,
      time: TIME,
      req: { method: 'POST', url: '/api/sweeps' },
      res: { statusCode: 500 },
      responseTime: 3,
      err: { type: 'Error', message: 'connection refused', stack: 'Error: connection refused\n    at …' },
      msg: 'request errored',
    })
    expect(formatLogLine(line)).toBe('02:40:05.123 ERROR POST /api/sweeps 500 3ms request errored — connection refused')
  })

  it('keeps the plain fields of a worker line as key=value, quoting text with spaces', () => {
    const line = JSON.stringify({ level: 40, time: TIME, pid: 1, hostname: 'h', msg: 'chunk retried', sweepId: 'a1b2', chunkIndex: 3, note: 'Redis was away', extra: { nested: true } })
    expect(formatLogLine(line)).toBe('02:40:05.123 WARN  chunk retried sweepId=a1b2 chunkIndex=3 note="Redis was away"')
  })

  it('leaves lines that are not pino records as they are', () => {
    for (const line of ['Listening on 127.0.0.1:8080', '    at Object.<anonymous> (server.ts:3:9)', '{not json', '{"hello":"world"}', '[1,2]', '']) {
      expect(formatLogLine(line)).toBe(line)
    }
  })
})

describe('consoleLineFormatter', () => {
  it('keeps the JSON when LOG_FORMAT=json and shortens it otherwise', () => {
    expect(consoleLineFormatter({ LOG_FORMAT: 'json' })).toBeUndefined()
    expect(consoleLineFormatter({})).toBe(formatLogLine)
  })
})
