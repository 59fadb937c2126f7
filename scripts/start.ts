import { setTimeout as sleep } from 'node:timers/promises'
import { join } from 'node:path'
import { buildWeb } from './lib/build-web.ts'
import { ChildGroup, type ChildExit } from './lib/child-group.ts'
import { CleanupStack } from './lib/cleanup-stack.ts'
import { parseConfig } from './lib/config.ts'
import { demoAccounts } from './lib/demo-accounts.ts'
import { isPortOpen } from './lib/is-port-open.ts'
import { consoleLineFormatter } from './lib/log-lines.ts'
import { startMailCatcher } from './lib/mail-catcher.ts'
import { LOCAL_PAYMENT_KEYS, paymentFakeEnv, startPaymentFake } from './lib/payment-fake.ts'
import { runMain } from './lib/run-main.ts'
import { ScriptError } from './lib/script-error.ts'
import { seedDemo } from './lib/seed-demo.ts'
import { createServices } from './lib/services.ts'
import { waitUntil } from './lib/wait-until.ts'
import { runMigrations } from './migrate.ts'

const say = (line: string) => console.log(`[start] ${line}`)

/**
 * `npm start`: PostgreSQL and Redis, migrations, the demo workspace, the built web app, then the API and
 * one worker. Ctrl-C or SIGTERM stops the programs and the services this run started; if one program
 * dies, the rest are stopped too and the exit code is non-zero.
 */
runMain(async () => {
  const config = parseConfig(process.env, { mode: 'dev' })
  const cleanup = new CleanupStack()
  const abort = new AbortController()
  const children = new ChildGroup(['api', 'worker'], consoleLineFormatter(process.env))
  let stopSignal: NodeJS.Signals | null = null
  const stopRequested = new Promise<NodeJS.Signals>((resolvePromise) => {
    const onSignal = (signal: NodeJS.Signals) => {
      if (stopSignal !== null) {
        say('Still stopping; please wait.')
        return
      }
      stopSignal = signal
      say(`${signal}: stopping`)
      abort.abort()
      resolvePromise(signal)
    }
    process.on('SIGINT', onSignal)
    process.on('SIGTERM', onSignal)
  })
  const checkStop = () => {
    if (stopSignal !== null) throw new ScriptError(`Stopped by ${stopSignal} before Crackpoint was up.`)
  }
  const apiHost = config.api.host === '0.0.0.0' ? '127.0.0.1' : config.api.host
  const url = `http://${apiHost}:${config.api.port}/`

  try {
    say(`Starting PostgreSQL and Redis (data in ${config.dataDir})`)
    const services = createServices(config, say)
    const started = await services.start()
    // Services an earlier `npm run services:start` left running stay up; only ours are stopped.
    cleanup.push('stop PostgreSQL and Redis', () => services.stop(started))
    checkStop()

    if (await isPortOpen(config.mail.host, config.mail.port)) {
      throw new ScriptError(`Port ${config.mail.port} for the mail catcher is taken; stop that program or set ${config.mail.portSetting}.`)
    }
    const mail = await startMailCatcher({ host: config.mail.host, port: config.mail.port, dir: config.mail.dir })
    cleanup.push('stop the mail catcher', () => mail.close())
    say(`Mail catcher on smtp://${mail.host}:${mail.port}: e-mail the app sends is saved in ${mail.dir}, never delivered`)
    checkStop()

    // Payments go to the local stand-in for Stripe unless STRIPE_API_BASE points the API elsewhere (Stripe's test mode).
    let paymentEnv: Record<string, string> = {}
    if (process.env.STRIPE_API_BASE) {
      say(`Payments go to ${process.env.STRIPE_API_BASE} (STRIPE_API_BASE); no local payment stand-in`)
    } else {
      if (await isPortOpen(config.payments.host, config.payments.port)) {
        throw new ScriptError(`Port ${config.payments.port} for the payment stand-in is taken; stop that program or set ${config.payments.portSetting}.`)
      }
      const payments = await startPaymentFake({
        host: config.payments.host,
        port: config.payments.port,
        ...LOCAL_PAYMENT_KEYS,
        webhookUrls: [`http://${apiHost}:${config.api.port}/api/billing/webhook`],
      })
      cleanup.push('stop the payment stand-in', () => payments.close())
      paymentEnv = paymentFakeEnv(payments)
      say(`Payment stand-in (in place of Stripe) on ${payments.baseUrl}: checkouts are paid on its own page and no money moves`)
    }
    checkStop()

    const { applied } = await runMigrations({ databaseUrl: config.databaseUrl })
    say(applied.length === 0 ? 'Database is up to date' : `Applied ${applied.length} migration(s)`)
    checkStop()

    await seedDemo(config.databaseUrl)
    say(`Demo workspace "${demoAccounts.workspace}" is seeded`)
    checkStop()

    say('Building the web app')
    const built = await buildWeb({ signal: abort.signal, outDir: config.webDist })
    say(`Web app built in ${built.seconds.toFixed(1)} s into ${config.webDist}`)
    checkStop()

    if (await isPortOpen(apiHost, config.api.port)) {
      throw new ScriptError(`Port ${config.api.port} is already taken by another program; stop it or set PORT to a free port.`)
    }
    const env: NodeJS.ProcessEnv = {
      ...process.env,
      DATABASE_URL: config.databaseUrl,
      REDIS_URL: config.redisUrl,
      HOST: config.api.host,
      PORT: String(config.api.port),
      WEB_DIST: config.webDist,
      ...paymentEnv,
      SMTP_URL: `smtp://${mail.host}:${mail.port}`,
    }
    cleanup.push('stop the API and the worker', () => children.stopAll())
    children.spawn('api', [process.execPath, '--import', 'tsx', join('api', 'src', 'server.ts')], { cwd: config.repoRoot, env })
    children.spawn('worker', [process.execPath, '--import', 'tsx', join('worker', 'src', 'main.ts')], {
      cwd: config.repoRoot,
      env,
    })

    let early: ChildExit | null = null
    void children.firstExit.then((exit) => (early = exit))
    const up = await waitUntil(async () => early !== null || stopSignal !== null || (await isPortOpen(apiHost, config.api.port)), {
      timeoutMs: 60_000,
      intervalMs: 200,
    })
    checkStop()
    if (!up) throw new ScriptError(`The API did not listen on ${apiHost}:${config.api.port} within 60 s.`)

    if (early === null) {
      console.log('')
      console.log(`Crackpoint is running at ${url}`)
      console.log(`Demo workspace "${demoAccounts.workspace}", password ${demoAccounts.password} for every account:`)
      for (const user of demoAccounts.users) console.log(`  ${user.email.padEnd(30)} ${user.role}`)
      console.log('Press Ctrl-C to stop.')
      console.log('')
    }

    const first = await Promise.race([children.firstExit, stopRequested])
    if (typeof first === 'string') return 0
    // Ctrl-C reaches the children too; give our own handler the moment to record it before judging.
    await sleep(250)
    if (stopSignal !== null) return 0
    const how = first.signal ? `was killed by ${first.signal}` : `exited with code ${first.code}`
    console.error(`\nThe ${first.name} ${how}; stopping the rest.`)
    return 1
  } finally {
    await cleanup.runAll((line) => console.error(`[start] ${line}`))
  }
})
