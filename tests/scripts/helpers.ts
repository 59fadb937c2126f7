import { mkdtempSync, rmSync } from 'node:fs'
import { createServer } from 'node:net'
import { tmpdir } from 'node:os'
import { join } from 'node:path'

/** A loopback port nobody listens on right now (the OS picks it). */
export function freePort(): Promise<number> {
  return new Promise((resolvePromise, reject) => {
    const server = createServer()
    server.once('error', reject)
    server.listen(0, '127.0.0.1', () => {
      const address = server.address()
      server.close(() => (typeof address === 'object' && address ? resolvePromise(address.port) : reject(new Error('no port'))))
    })
  })
}

/** A fresh temporary folder and the function that removes it. */
export function tempDir(prefix: string): { dir: string; remove: () => void } {
  const dir = mkdtempSync(join(tmpdir(), `crackpoint-${prefix}-`))
  return { dir, remove: () => rmSync(dir, { recursive: true, force: true }) }
}
