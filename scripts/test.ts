import { chmodSync, existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { dirname, join, sep } from 'node:path'
import { buildWeb } from './lib/build-web.ts'
import { CleanupStack } from './lib/cleanup-stack.ts'
import { fallbackClusterRoot } from './lib/cluster-location.ts'
import { parseConfig } from './lib/config.ts'
import { findTestFiles } from './lib/find-test-files.ts'
import { startMailCatcher } from './lib/mail-catcher.ts'
import { LOCAL_PAYMENT_KEYS, paymentFakeEnv, startPaymentFake } from './lib/payment-fake.ts'
import { repoRoot } from './lib/repo-root.ts'
import { runCommand } from './lib/run-command.ts'
import { runMain } from './lib/run-main.ts'
import { runVitest, type VitestOutcome, type VitestRun } from './lib/run-vitest.ts'
import { ScriptError } from './lib/script-error.ts'
import { createServices } from './lib/services.ts'
import { tailFile } from './lib/tail-file.ts'
import { runMigrations } from './migrate.ts'

const say = (line: string) => console.log(`[test] ${line}`)

interface Suite {
  name: string
  /** Where its test files are, to tell "no tests yet" from "tests that vitest did not find". */
  testDir: string
  run: Omit<VitestRun, 'name' | 'passWithNoTests'>
}

const packageConfigNames = ['vitest.config', 'vite.config'].flatMap((n) => ['.ts', '.mts', '.js', '.mjs'].map((e) => n + e))

/** A workspace package runs with its own vitest config (the package owns it), from its own folder. */
function packageSuite(name: string): Suite {
  const root = join(repoRoot, name)
  const own = packageConfigNames.map((n) => join(root, n)).find((path) => existsSync(path))
  return {
    name,
    testDir: root,
    run: { root, config: own ?? join(repoRoot, 'scripts', 'lib', 'vitest-package-defaults.config.ts') },
  }
}

/** Cross-package tests under /tests run as projects of the root vitest.config.ts. */
function rootSuite(project: string): Suite {
  return {
    name: `tests/${project}`,
    testDir: join(repoRoot, 'tests', project),
    run: { root: repoRoot, config: join(repoRoot, 'vitest.config.ts'), extraArgs: ['--project', project] },
  }
}

const suites: Suite[] = [
  rootSuite('scripts'),
  packageSuite('sim-core'),
  packageSuite('worker'),
  packageSuite('api'),
  packageSuite('web'),
  rootSuite('api'),
  rootSuite('e2e'),
]

/**
 * `npm test`: throwaway PostgreSQL and Redis on the test ports in a fresh temporary folder, migrations,
 * a build of the web app, then every suite in turn with the services' addresses in the environment, and a
 * type-check of every workspace when no suite is named.
 * Suites run one after another because they share one database. The services and the folder are removed
 * at the end, whatever happened. `npm test -- <suite> …` runs only the suites named.
 */
runMain(async () => {
  const wanted = process.argv.slice(2)
  const unknown = wanted.filter((name) => !suites.some((s) => s.name === name))
  if (unknown.length > 0) {
    throw new ScriptError(`No test suite named ${unknown.join(', ')}. Suites: ${suites.map((s) => s.name).join(', ')}`)
  }
  const selected = wanted.length === 0 ? suites : suites.filter((s) => wanted.includes(s.name))
  // Working on one part: CRACKPOINT_TEST_FILTER="sweep-results usage" runs only the files whose paths
  // contain one of the words (vitest's own filter), still on throwaway services.
  const fileFilters = (process.env.CRACKPOINT_TEST_FILTER ?? '').split(/\s+/).filter((word) => word !== '')

  const started = Date.now()
  const cleanup = new CleanupStack()
  const abort = new AbortController()
  let stopSignal: NodeJS.Signals | null = null
  const onSignal = (signal: NodeJS.Signals) => {
    if (stopSignal !== null) return
    stopSignal = signal
    say(`${signal}: stopping the tests and cleaning up`)
    abort.abort()
  }
  process.on('SIGINT', onSignal)
  process.on('SIGTERM', onSignal)

  const tmp = mkdtempSync(join(tmpdir(), 'crackpoint-test-'))
  cleanup.push(`remove ${tmp}`, () => rmSync(tmp, { recursive: true, force: true }))
  // mkdtemp makes the folder 0700; as root, PostgreSQL runs as the postgres user and must pass through it.
  chmodSync(tmp, 0o755)
  const reportDir = join(tmp, 'reports')
  mkdirSync(reportDir)
  // The suites' own temporary files (browser profiles, extra clusters) go inside the run's folder, so they
  // are removed with it even when a suite is interrupted before its own clean-up. Sticky and open to all,
  // like /tmp, because as root the postgres user writes there too.
  const suiteTmp = join(tmp, 'tmp')
  mkdirSync(suiteTmp)
  chmodSync(suiteTmp, 0o1777)

  const outcomes: VitestOutcome[] = []
  const failedSteps: string[] = []
  try {
    const config = parseConfig(process.env, { mode: 'test', dataDir: tmp })
    const services = createServices(config, say)
    cleanup.push('remove the test cluster', () => {
      const dir = services.postgres.clusterDir()
      // Only a cluster moved out of the temporary folder needs removing on its own (see cluster-location.ts).
      if (!dir.startsWith(tmp + sep) && dir.startsWith(fallbackClusterRoot + sep)) {
        rmSync(dirname(dir), { recursive: true, force: true })
      }
    })
    say(`Starting throwaway PostgreSQL and Redis in ${tmp}`)
    await services.start()
    cleanup.push('stop the test services', () => services.stop())

    // E-mail the suites send lands in the run's folder; tests read it from CRACKPOINT_MAIL_DIR.
    const mail = await startMailCatcher({ host: config.mail.host, port: config.mail.port, dir: config.mail.dir }).catch((error: unknown) => {
      throw new ScriptError(`The mail catcher could not listen on port ${config.mail.port} (${error instanceof Error ? error.message : String(error)}); set ${config.mail.portSetting} to a free port.`)
    })
    cleanup.push('stop the mail catcher', () => mail.close())

    // The local stand-in for Stripe; each test that pays registers its own API's webhook URL with it.
    const payments = await startPaymentFake({ host: config.payments.host, port: config.payments.port, ...LOCAL_PAYMENT_KEYS }).catch((error: unknown) => {
      throw new ScriptError(`The payment stand-in could not listen on port ${config.payments.port} (${error instanceof Error ? error.message : String(error)}); set ${config.payments.portSetting} to a free port.`)
    })
    cleanup.push('stop the payment stand-in', () => payments.close())

    const { applied } = await runMigrations({ databaseUrl: config.databaseUrl })
    say(`Applied ${applied.length} migration(s)`)

    if (stopSignal === null) {
      try {
        say('Building the web app')
        const built = await buildWeb({ outDir: config.webDist, signal: abort.signal })
        say(`Web app built in ${built.seconds.toFixed(1)} s`)
      } catch (error) {
        // The suites still run: most do not need the built app, and their results are worth having.
        failedSteps.push('web build')
        console.error(error instanceof Error ? error.message : String(error))
      }
    }

    const env: NodeJS.ProcessEnv = {
      ...process.env,
      DATABASE_URL: config.databaseUrl,
      REDIS_URL: config.redisUrl,
      LOG_LEVEL: 'silent',
      NODE_ENV: 'test',
      CHROMIUM_PATH: config.chromiumPath,
      WEB_DIST: config.webDist,
      ...paymentFakeEnv(payments),
      TMPDIR: suiteTmp,
      SMTP_URL: `smtp://${mail.host}:${mail.port}`,
      CRACKPOINT_MAIL_DIR: mail.dir,
    }
    for (const suite of selected) {
      if (stopSignal !== null) break
      const hasTests = findTestFiles(suite.testDir).length > 0
      say(`Running ${suite.name}${hasTests ? '' : ' (no test files yet)'}`)
      const outcome = await runVitest(
        {
          name: suite.name,
          ...suite.run,
          extraArgs: [...(suite.run.extraArgs ?? []), ...fileFilters],
          // A filter that matches no file of this suite leaves the suite empty, which is no failure.
          passWithNoTests: !hasTests || fileFilters.length > 0,
        },
        { env, reportDir, signal: abort.signal },
      )
      outcomes.push(stopSignal === null ? outcome : { ...outcome, note: `interrupted by ${stopSignal}` })
    }

    if (wanted.length === 0 && fileFilters.length === 0 && stopSignal === null) {
      // The suites run under tsx and vite, which strip types without checking them; the whole run checks them.
      say('Type-checking every workspace')
      const checked = await runCommand(['npm', 'run', '--silent', 'type-check'], { allowFailure: true, signal: abort.signal })
      if (checked.code !== 0) {
        failedSteps.push('type-check')
        console.error(checked.output.trim())
      }
    }

    for (const status of await services.status()) {
      if (status.state !== 'running') {
        failedSteps.push(`${status.name} stopped during the tests`)
        console.error(`${status.name} is ${status.state} after the tests. Last lines of ${status.log}:\n${tailFile(status.log)}`)
      }
    }
  } catch (error) {
    if (!(error instanceof ScriptError)) throw error
    failedSteps.push('setting up the test services')
    console.error(`\n${error.message}`)
  } finally {
    await cleanup.runAll((line) => console.error(`[test] ${line}`))
  }

  const passed = outcomes.reduce((sum, o) => sum + o.passed, 0)
  const failed = outcomes.reduce((sum, o) => sum + o.failed, 0) + failedSteps.length
  console.log('\nSummary')
  for (const o of outcomes) {
    const counts = o.passed + o.failed + o.skipped === 0 ? 'no tests' : `${o.passed} passed, ${o.failed} failed`
    const skipped = o.skipped > 0 ? `, ${o.skipped} skipped` : ''
    console.log(`  ${o.failed > 0 ? '✗' : '✓'} ${o.name.padEnd(14)} ${counts}${skipped}  (${o.seconds.toFixed(1)} s)${o.note ? `  ${o.note}` : ''}`)
  }
  for (const step of failedSteps) console.log(`  ✗ ${step} (counted as 1 failed)`)
  if (stopSignal !== null) console.log(`  stopped by ${stopSignal}; suites not run are left out`)
  console.log(`  total ${((Date.now() - started) / 1000).toFixed(1)} s`)
  console.log(`${passed} passed, ${failed} failed`)
  return failed === 0 && stopSignal === null ? 0 : 1
})
