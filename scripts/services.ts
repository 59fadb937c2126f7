import { parseConfig } from './lib/config.ts'
import { runMain } from './lib/run-main.ts'
import { createServices } from './lib/services.ts'

const usage = 'usage: npm run services:start | services:stop | services:status'

/** `npm run services:*`: the PostgreSQL and Redis of `npm start`, for working on one part at a time. */
runMain(async () => {
  const action = process.argv[2]
  const config = parseConfig(process.env, { mode: 'dev' })
  const say = (line: string) => console.log(line)
  const services = createServices(config, say)
  switch (action) {
    case 'start':
      await services.start()
      console.log(`DATABASE_URL=${config.databaseUrl}`)
      console.log(`REDIS_URL=${config.redisUrl}`)
      return 0
    case 'stop': {
      const stopped = await services.stop()
      console.log(stopped.postgres ? 'PostgreSQL stopped' : 'PostgreSQL was not running')
      console.log(stopped.redis ? 'Redis stopped' : 'Redis was not running')
      return 0
    }
    case 'status': {
      const all = await services.status()
      for (const s of all) {
        console.log(
          `${s.name.padEnd(10)} ${s.state.padEnd(13)} 127.0.0.1:${s.port}` +
            `${s.pid === null ? '' : `  pid ${s.pid}`}  ${s.dir}`,
        )
      }
      // Non-zero when anything is not up, so scripts can ask "are the services running?".
      return all.every((s) => s.state === 'running') ? 0 : 3
    }
    default:
      console.error(usage)
      return 2
  }
})
