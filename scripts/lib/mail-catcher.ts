import { mkdirSync, renameSync, writeFileSync } from 'node:fs'
import type { AddressInfo } from 'node:net'
import { join } from 'node:path'
import { SMTPServer } from 'smtp-server'

export interface MailCatcher {
  readonly host: string
  readonly port: number
  readonly dir: string
  close(): Promise<void>
}

export interface MailCatcherOptions {
  host?: string
  /** 0 takes any free port. */
  port: number
  /** Each message is saved here as one .eml file. */
  dir: string
  /** A message larger than this is refused (bytes). */
  maxBytes?: number
}

let sequence = 0

/** A file name that sorts in arrival order and never collides within one process. */
function fileNameFor(): string {
  sequence += 1
  return `${new Date().toISOString().replace(/[:.]/g, '-')}-${process.pid}-${String(sequence).padStart(6, '0')}.eml`
}

/**
 * A local SMTP server that accepts every message on loopback and keeps it as an .eml file, in place of
 * a hosted mail provider. No TLS (smtp-server's built-in certificate has expired) and no sign-in: it
 * listens on loopback only and delivers nothing onwards.
 */
export async function startMailCatcher(options: MailCatcherOptions): Promise<MailCatcher> {
  const host = options.host ?? '127.0.0.1'
  mkdirSync(options.dir, { recursive: true })
  const server = new SMTPServer({
    disabledCommands: ['STARTTLS', 'AUTH'],
    authOptional: true,
    size: options.maxBytes ?? 10 * 1024 * 1024,
    banner: 'Crackpoint local mail catcher',
    logger: false,
    onData(stream, _session, callback) {
      const chunks: Buffer[] = []
      stream.on('data', (chunk: Buffer) => chunks.push(chunk))
      stream.on('error', (error) => callback(error))
      stream.on('end', () => {
        if ((stream as { sizeExceeded?: boolean }).sizeExceeded) {
          callback(Object.assign(new Error('Message is too large for the mail catcher'), { responseCode: 552 }))
          return
        }
        try {
          // Written under a temporary name and renamed, so a reader never sees half a message.
          const name = fileNameFor()
          const partial = join(options.dir, `.${name}.part`)
          writeFileSync(partial, Buffer.concat(chunks))
          renameSync(partial, join(options.dir, name))
          callback()
        } catch (error) {
          callback(error instanceof Error ? error : new Error(String(error)))
        }
      })
    },
  })
  await new Promise<void>((resolve, reject) => {
    const onError = (error: Error) => reject(error)
    server.once('error', onError)
    server.listen(options.port, host, () => {
      server.off('error', onError)
      resolve()
    })
  })
  server.on('error', () => {
    // A client that drops mid-message is its own problem; the catcher keeps listening.
  })
  const address = server.server.address() as AddressInfo
  return {
    host,
    port: address.port,
    dir: options.dir,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  }
}
