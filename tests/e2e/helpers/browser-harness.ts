import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs'
import type { Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { tmpdir } from 'node:os'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { Queue } from 'bullmq'
import { Redis } from 'ioredis'
import type { Knex } from 'knex'
import { chromium, type BrowserContext, type Page } from 'playwright-core'
import { createApp, createKnex, DEMO_PASSWORD, loadConfig, seedDemoWorkspace } from '@crackpoint/api'
import { createSweepWorker, type SweepChunkJob, type SweepWorker } from '@crackpoint/worker'

export const repoRoot = join(dirname(fileURLToPath(import.meta.url)), '..', '..', '..')
export const SCREENSHOT_DIR = join(repoRoot, 'test-results', 'e2e')

/** Where a browser test saves a picture of what it saw, for a person to look at. */
export function screenshotPath(name: string): string {
  mkdirSync(SCREENSHOT_DIR, { recursive: true })
  return join(SCREENSHOT_DIR, name)
}

export interface Harness {
  knex: Knex
  baseUrl: string
  context: BrowserContext
  page: Page
  /** The demo scenario seeded for this run. */
  scenarioId: string
  /** Uncaught errors of every page the context opened; a test expects none. */
  pageErrors: string[]
  close(): Promise<void>
}

/**
 * The API, the worker and the built web app in this process against the PostgreSQL and Redis that
 * `npm test` provides, and a fresh headless Chromium profile.
 */
export async function startHarness(options: { viewport?: { width: number; height: number } } = {}): Promise<Harness> {
  const config = loadConfig({ ...process.env, PORT: '0', NODE_ENV: 'test' })
  if (!existsSync(join(config.webDist, 'index.html'))) {
    throw new Error(`No built web app in ${config.webDist}: npm test builds it, or run \`npm run build\` and set WEB_DIST.`)
  }
  const knex = createKnex(config.databaseUrl)
  const seeded = await seedDemoWorkspace(knex, { bcryptCost: config.bcryptCost })

  // A queue of this run's own, so no other worker on the same Redis takes its chunks.
  const queueName = `sweep-chunks-e2e-${process.pid}-${Date.now()}`
  const redis = new Redis(config.redisUrl, { maxRetriesPerRequest: null })
  const queue = new Queue<SweepChunkJob>(queueName, { connection: redis })
  const worker: SweepWorker = createSweepWorker({ knex, redis: config.redisUrl, queueName, concurrency: 2 })

  const app = createApp({ knex, queue, config })
  const server = await new Promise<Server>((resolve, reject) => {
    const listening = app.listen(0, '127.0.0.1', () => resolve(listening))
    listening.on('error', reject)
  })
  const baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`

  const profileDir = mkdtempSync(join(tmpdir(), 'crackpoint-e2e-browser-'))
  const context = await chromium.launchPersistentContext(profileDir, {
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    viewport: options.viewport ?? { width: 1440, height: 1000 },
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  })
  const pageErrors: string[] = []
  // Script errors, and anything the Content-Security-Policy refused (the browser reports it on the console).
  const watch = (p: Page) => {
    p.on('pageerror', (error) => pageErrors.push(error.message))
    p.on('console', (message) => {
      if (message.type() === 'error' && /Content Security Policy/i.test(message.text())) pageErrors.push(message.text())
    })
  }
  context.on('page', watch)
  const page = context.pages()[0] ?? (await context.newPage())
  watch(page)

  return {
    knex,
    baseUrl,
    context,
    page,
    scenarioId: seeded.scenarioId,
    pageErrors,
    async close() {
      await context.close()
      rmSync(profileDir, { recursive: true, force: true })
      await new Promise<void>((resolve) => server.close(() => resolve()))
      await worker.close()
      await queue.close()
      await redis.quit()
      await knex.destroy()
    },
  }
}

/** Signs in through the API and hands the token to the page, for tests whose subject is not the sign-in form. */
export async function signInAs(h: Harness, email: string): Promise<string> {
  const response = await fetch(`${h.baseUrl}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ email, password: DEMO_PASSWORD }),
  })
  if (!response.ok) throw new Error(`sign-in as ${email} answered ${response.status}`)
  const { token } = (await response.json()) as { token: string }
  await h.page.goto(`${h.baseUrl}/sign-in`)
  await h.page.evaluate((value) => localStorage.setItem('crackpoint.token', value), token)
  return token
}

/** A scenario made through the API, as a shop would have saved it. */
export async function createScenario(h: Harness, token: string, name: string, data: unknown): Promise<string> {
  const response = await fetch(`${h.baseUrl}/api/scenarios`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json', Authorization: `Bearer ${token}` },
    body: JSON.stringify({ name, data }),
  })
  if (response.status !== 201) throw new Error(`creating "${name}" answered ${response.status}: ${await response.text()}`)
  return ((await response.json()) as { scenario: { id: string } }).scenario.id
}
