import { existsSync, readdirSync } from 'node:fs'
import { join, resolve } from 'node:path'
import { pathToFileURL } from 'node:url'
// knex's named export type-checks but is undefined at run time under ESM (STACK.md pitfalls).
import knexPkg from 'knex'
import type { Knex } from 'knex'
import { parseConfig } from './lib/config.ts'
import { repoRoot } from './lib/repo-root.ts'
import { runMain } from './lib/run-main.ts'
import { ScriptError } from './lib/script-error.ts'

export interface MigrateOptions {
  databaseUrl: string
  /** Folder of `YYYYMMDDHHMMSS_verb_noun.ts` migrations; the repository's /migrations by default. */
  directory?: string
}

export interface MigrateResult {
  /** Batch number knex gave this run (unchanged from the last run when nothing was new). */
  batch: number
  /** File names applied by this run, in order. */
  applied: string[]
}

const migrationFile = /^\d{14}_[a-z0-9_]+\.ts$/

/**
 * knex's own file loader hands `.ts` files to Node itself, which cannot read TypeScript unless tsx is
 * preloaded (true under `npm start`, not inside vitest). Importing them here instead goes through
 * whichever loader runs this module, so migrations load the same in both. Names stay the file names,
 * exactly what knex's folder source records in knex_migrations.
 */
function folderSource(directory: string): Knex.MigrationSource<string> {
  return {
    getMigrations: async () => {
      const files = readdirSync(directory).filter((name) => name.endsWith('.ts') && !name.endsWith('.d.ts'))
      const misnamed = files.filter((name) => !migrationFile.test(name))
      if (misnamed.length > 0) {
        throw new ScriptError(
          `Migration file names must look like YYYYMMDDHHMMSS_verb_noun.ts; these do not: ${misnamed.join(', ')}`,
        )
      }
      return files.sort()
    },
    getMigrationName: (name) => name,
    getMigration: async (name) => (await import(pathToFileURL(join(directory, name)).href)) as Knex.Migration,
  }
}

/** Brings the database up to the newest migration with knex.migrate.latest(), in one connection pool it closes. */
export async function runMigrations(options: MigrateOptions): Promise<MigrateResult> {
  const directory = resolve(options.directory ?? join(repoRoot, 'migrations'))
  if (!existsSync(directory)) throw new ScriptError(`The migrations folder ${directory} does not exist.`)
  const knex = knexPkg({ client: 'pg', connection: options.databaseUrl, pool: { min: 0, max: 2 } })
  try {
    const [batch, applied] = (await knex.migrate.latest({ migrationSource: folderSource(directory) })) as [
      number,
      string[],
    ]
    return { batch, applied }
  } catch (error) {
    if (error instanceof ScriptError) throw error
    const message = error instanceof Error ? error.message : String(error)
    throw new ScriptError(`Migrating the database failed: ${message}`)
  } finally {
    await knex.destroy()
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  runMain(async () => {
    const databaseUrl = process.env.DATABASE_URL || parseConfig(process.env, { mode: 'dev' }).databaseUrl
    const { applied } = await runMigrations({ databaseUrl })
    console.log(applied.length === 0 ? 'The database is up to date.' : `Applied ${applied.length} migration(s):`)
    for (const name of applied) console.log(`  ${name}`)
    return 0
  })
}
