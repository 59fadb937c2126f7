import { parseConfig } from './lib/config.ts'
import { demoAccounts } from './lib/demo-accounts.ts'
import { runMain } from './lib/run-main.ts'
import { seedDemo } from './lib/seed-demo.ts'

/** `npm run seed`: the demo workspace, into DATABASE_URL or the database of `npm start`. */
runMain(async () => {
  const databaseUrl = process.env.DATABASE_URL || parseConfig(process.env, { mode: 'dev' }).databaseUrl
  await seedDemo(databaseUrl)
  console.log(`Demo workspace "${demoAccounts.workspace}" is seeded.`)
  return 0
})
