import { connect } from 'node:net'

/** Whether something accepts TCP connections on host:port right now. */
export function isPortOpen(host: string, port: number, timeoutMs = 500): Promise<boolean> {
  return new Promise((resolvePromise) => {
    const socket = connect({ host, port })
    const done = (open: boolean) => {
      socket.destroy()
      resolvePromise(open)
    }
    socket.setTimeout(timeoutMs, () => done(false))
    socket.once('connect', () => done(true))
    socket.once('error', () => done(false))
  })
}
