/** One server-sent event, as the HTML standard's event-stream format defines it. */
export interface ServerSentEvent {
  /** The `event:` field; `message` when the server gave none. */
  type: string
  /** Every `data:` line of the event joined with a newline. */
  data: string
  /** The last `id:` seen on the stream so far (it carries over to later events). */
  lastEventId: string
  /** A `retry:` the server asked for, in milliseconds, when this event carried one. */
  retryMs?: number
}

/**
 * Turns text chunks of a `text/event-stream` body into events. Chunks may split a line (or a CR LF pair)
 * anywhere, so partial lines are kept until their end arrives; an event is only handed out at the blank
 * line that ends it, and a stream that stops mid-event drops that event, as browsers do.
 */
export function createSseParser(onEvent: (event: ServerSentEvent) => void): { push(chunk: string): void; end(): void } {
  let buffer = ''
  let first = true
  /** A chunk ended on CR: a LF starting the next chunk belongs to the same line break. */
  let afterCr = false
  let type = ''
  let data: string[] = []
  let hasData = false
  let lastEventId = ''
  let retryMs: number | undefined

  function dispatch(): void {
    if (hasData) {
      const event: ServerSentEvent = { type: type || 'message', data: data.join('\n'), lastEventId }
      if (retryMs !== undefined) event.retryMs = retryMs
      onEvent(event)
    }
    type = ''
    data = []
    hasData = false
    retryMs = undefined
  }

  function line(text: string): void {
    if (text === '') return dispatch()
    if (text.startsWith(':')) return
    const colon = text.indexOf(':')
    const field = colon === -1 ? text : text.slice(0, colon)
    let value = colon === -1 ? '' : text.slice(colon + 1)
    if (value.startsWith(' ')) value = value.slice(1)
    switch (field) {
      case 'event':
        type = value
        break
      case 'data':
        data.push(value)
        hasData = true
        break
      case 'id':
        // The standard ignores an id holding NUL, so a stray byte cannot reset the stream's position.
        if (!value.includes('\0')) lastEventId = value
        break
      case 'retry':
        if (/^\d+$/.test(value)) retryMs = Number(value)
        break
      default:
        break
    }
  }

  return {
    push(chunk: string): void {
      let text = chunk
      if (first && text.length > 0) {
        if (text.startsWith('\uFEFF')) text = text.slice(1)
        first = false
      }
      if (afterCr && text.startsWith('\n')) text = text.slice(1)
      afterCr = false
      buffer += text
      let start = 0
      for (let i = 0; i < buffer.length; i++) {
        const c = buffer[i]
        if (c !== '\n' && c !== '\r') continue
        line(buffer.slice(start, i))
        if (c === '\r') {
          if (i + 1 < buffer.length) {
            if (buffer[i + 1] === '\n') i++
          } else {
            afterCr = true
          }
        }
        start = i + 1
      }
      buffer = buffer.slice(start)
    },
    end(): void {
      buffer = ''
      type = ''
      data = []
      hasData = false
    },
  }
}
