import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { simpleParser } from 'mailparser'
import nodemailer from 'nodemailer'
import { afterEach, describe, expect, it } from 'vitest'
import { startMailCatcher, type MailCatcher } from '../../scripts/lib/mail-catcher.ts'

let catcher: MailCatcher | undefined
let dir: string | undefined

afterEach(async () => {
  await catcher?.close()
  if (dir) rmSync(dir, { recursive: true, force: true })
  catcher = undefined
  dir = undefined
})

describe('mail catcher', () => {
  it('keeps each message nodemailer sends over loopback as an .eml file, text and HTML parts intact', async () => {
    dir = mkdtempSync(join(tmpdir(), 'crackpoint-mail-'))
    catcher = await startMailCatcher({ port: 0, dir })
    expect(catcher.port).toBeGreaterThan(0)
    const transport = nodemailer.createTransport({ host: '127.0.0.1', port: catcher.port, secure: false })
    await transport.sendMail({ from: 'shop@test.example', to: 'a@test.example', subject: 'One', text: 'plain words', html: '<p>html words</p>' })
    await transport.sendMail({ from: 'shop@test.example', to: 'b@test.example', subject: 'Two', text: 'second' })
    transport.close()

    const files = readdirSync(dir).sort()
    expect(files).toHaveLength(2)
    expect(files.every((f) => f.endsWith('.eml'))).toBe(true)
    const first = await simpleParser(readFileSync(join(dir, files[0]!)))
    expect(first.subject).toBe('One')
    expect(first.text?.trim()).toBe('plain words')
    expect(first.html).toContain('<p>html words</p>')
    const second = await simpleParser(readFileSync(join(dir, files[1]!)))
    expect(second.subject).toBe('Two')
  })

  it('refuses a port that is taken with the error of the listen', async () => {
    dir = mkdtempSync(join(tmpdir(), 'crackpoint-mail-'))
    catcher = await startMailCatcher({ port: 0, dir })
    await expect(startMailCatcher({ port: catcher.port, dir })).rejects.toThrow(/EADDRINUSE/)
  })
})
