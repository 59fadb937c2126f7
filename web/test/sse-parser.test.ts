import { afterEach, describe, expect, it, vi } from 'vitest'
import { readEventStream } from '@/api/event-stream'
import { ApiError } from '@/api/api-error'
import { createSseParser, type ServerSentEvent } from '@/api/sse-parser'

function parse(chunks: string[]): ServerSentEvent[] {
  const events: ServerSentEvent[] = []
  const parser = createSseParser((event) => events.push(event))
  for (const chunk of chunks) parser.push(chunk)
  parser.end()
  return events
}

afterEach(() => {
  vi.unstubAllGlobals()
  localStorage.clear()
})

describe('createSseParser', () => {
  it('reads named events and joins their data lines with a newline', () => {
    const events = parse(['event: progress\ndata: {"pointsDone":3}\n\nevent: state\ndata: a\ndata: b\n\n'])
    expect(events).toEqual([
      { type: 'progress', data: '{"pointsDone":3}', lastEventId: '' },
      { type: 'state', data: 'a\nb', lastEventId: '' },
    ])
  })

  it('puts together lines split across chunks, CR LF pairs split between chunks included', () => {
    const events = parse(['ev', 'ent: progr', 'ess\r', '\ndata: {"a"', ':1}\r', '\n\r', '\n'])
    expect(events).toEqual([{ type: 'progress', data: '{"a":1}', lastEventId: '' }])
  })

  it('takes CR alone and LF alone as line ends, and a message type when none is named', () => {
    expect(parse(['data: one\r\rdata: two\n\n'])).toEqual([
      { type: 'message', data: 'one', lastEventId: '' },
      { type: 'message', data: 'two', lastEventId: '' },
    ])
  })

  it('skips comments and unknown fields, keeps the last id for later events and reads retry', () => {
    const events = parse([': keep-alive\n\nid: 7\nretry: 2500\nfoo: bar\ndata:x\n\ndata: y\n\n'])
    expect(events).toEqual([
      { type: 'message', data: 'x', lastEventId: '7', retryMs: 2500 },
      { type: 'message', data: 'y', lastEventId: '7' },
    ])
  })

  it('drops a leading byte-order mark, an event without data and an event cut off by the end of the stream', () => {
    expect(parse(['\uFEFFevent: state\n\ndata: kept\n\ndata: cut'])).toEqual([{ type: 'message', data: 'kept', lastEventId: '' }])
  })

  it('strips only one space after the colon', () => {
    expect(parse(['data:  two spaces\n\n'])[0]?.data).toBe(' two spaces')
  })
})

function streamOf(chunks: string[]): ReadableStream<Uint8Array> {
  const encoder = new TextEncoder()
  return new ReadableStream({
    start(controller) {
      for (const chunk of chunks) controller.enqueue(encoder.encode(chunk))
      controller.close()
    },
  })
}

describe('readEventStream', () => {
  it('sends the token in the Authorization header and hands out every event until the stream ends', async () => {
    localStorage.setItem('crackpoint.token', 'tok')
    const seen: { url: string; headers: Record<string, string> }[] = []
    vi.stubGlobal('fetch', async (url: string, init: RequestInit) => {
      seen.push({ url, headers: init.headers as Record<string, string> })
      return new Response(streamOf(['event: progress\ndata: 1\n', '\nevent: progress\nda', 'ta: 2\n\n']), {
        status: 200,
        headers: { 'Content-Type': 'text/event-stream' },
      })
    })
    const events: ServerSentEvent[] = []
    await readEventStream('/api/sweeps/w1/events', (event) => events.push(event))
    expect(events.map((e) => e.data)).toEqual(['1', '2'])
    expect(seen[0]?.url).toBe('/api/sweeps/w1/events')
    expect(seen[0]?.headers).toMatchObject({ Authorization: 'Bearer tok', Accept: 'text/event-stream' })
  })

  it('rejects with the API error and its status when the server answers with an error', async () => {
    vi.stubGlobal('fetch', async () =>
      new Response(JSON.stringify({ error: { code: 'not_found', message: 'No such route.' } }), { status: 404 }),
    )
    const failure = await readEventStream('/api/sweeps/w1/events', () => undefined).catch((e: unknown) => e)
    expect(failure).toBeInstanceOf(ApiError)
    expect((failure as ApiError).status).toBe(404)
    expect((failure as ApiError).message).toBe('No such route.')
  })
})
