import { connect } from 'node:net'

/** Sends PING over the Redis protocol and tells whether a Redis server answered PONG. */
export function redisPing(host: string, port: number, timeoutMs = 500): Promise<boolean> {
  return new Promise((resolvePromise) => {
    const socket = connect({ host, port })
    let reply = ''
    const done = (ok: boolean) => {
      socket.destroy()
      resolvePromise(ok)
    }
    socket.setTimeout(timeoutMs, () => done(false))
    socket.once('connect', () => socket.write('PING\r\n'))
    socket.on('data', (chunk: Buffer) => {
      reply += chunk.toString()
      if (reply.includes('\r\n')) done(reply.startsWith('+PONG'))
    })
    socket.once('error', () => done(false))
  })
}
