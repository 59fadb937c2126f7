import knexPkg from 'knex'
import type { Knex } from 'knex'
import { ScriptError } from './script-error.ts'

type SeedFunction = (knex: Knex) => Promise<unknown>

/** The API package's seedDemoWorkspace, loaded only when seeding so the scripts start without the API. */
async function loadSeed(): Promise<SeedFunction> {
  let api: Record<string, unknown>
  try {
    api = (await import('@crackpoint/api')) as Record<string, unknown>
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code
    if (code === 'ERR_MODULE_NOT_FOUND' && String((error as Error).message).includes('api/src/index.ts')) {
      throw new ScriptError('The demo workspace cannot be seeded: api/src/index.ts does not exist yet.')
    }
    throw new ScriptError(
      `The demo workspace cannot be seeded: loading @crackpoint/api failed:\n${(error as Error).stack ?? String(error)}`,
    )
  }
  const seed = api.seedDemoWorkspace
  if (typeof seed !== 'function') {
    throw new ScriptError('The demo workspace cannot be seeded: @crackpoint/api does not export seedDemoWorkspace(knex).')
  }
  return seed as SeedFunction
}

/** Seeds the demo workspace of contract.md (idempotent on the API's side) over its own short-lived pool. */
export async function seedDemo(databaseUrl: string): Promise<void> {
  const seed = await loadSeed()
  const knex = knexPkg({ client: 'pg', connection: databaseUrl, pool: { min: 0, max: 2 } })
  try {
    await seed(knex)
  } catch (error) {
    throw new ScriptError(`Seeding the demo workspace failed:\n${(error as Error).stack ?? String(error)}`)
  } finally {
    await knex.destroy()
  }
}
