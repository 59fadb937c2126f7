import { chmodSync, mkdirSync, statSync } from 'node:fs'
import { join } from 'node:path'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { locateCluster } from '../../scripts/lib/cluster-location.ts'
import type { PostgresAccount } from '../../scripts/lib/postgres-account.ts'
import { tempDir } from './helpers.ts'

// A postgres account that owns nothing here and shares no group, as on a machine run by root.
const stranger: PostgresAccount = {
  asRoot: true,
  name: 'postgres',
  uid: 2_000_000_001,
  gid: 2_000_000_001,
  groups: [],
  command: (argv) => ({ argv: [...argv], env: process.env }),
}

describe('locateCluster', () => {
  let folder: ReturnType<typeof tempDir>
  let fallbackRoot: string
  beforeEach(() => {
    folder = tempDir('cluster')
    chmodSync(folder.dir, 0o755)
    fallbackRoot = join(folder.dir, 'fallback')
  })
  afterEach(() => folder.remove())

  it('keeps the cluster in the data folder and lets the postgres user pass through it', () => {
    const dataDir = join(folder.dir, 'data')
    mkdirSync(dataDir, { mode: 0o700 })
    const location = locateCluster(dataDir, stranger, { prepare: true, fallbackRoot })
    expect(location).toEqual({ dir: join(dataDir, 'pg'), note: null })
    expect(statSync(dataDir).mode & 0o777).toBe(0o701)
  })

  it('moves the cluster out, and says so, when a folder above the data folder shuts postgres out', () => {
    const outer = join(folder.dir, 'home')
    mkdirSync(outer, { mode: 0o700 })
    const dataDir = join(outer, 'repo', '.data')
    const location = locateCluster(dataDir, stranger, { prepare: true, fallbackRoot })
    expect(location.dir.startsWith(join(fallbackRoot, ''))).toBe(true)
    expect(location.note).toContain(`may not enter ${outer}`)
    expect(statSync(outer).mode & 0o777).toBe(0o700)

    // Later runs find the same place, without preparing anything.
    expect(locateCluster(dataDir, stranger, { prepare: false, fallbackRoot }).dir).toBe(location.dir)
  })

  it('leaves an ordinary user\'s cluster in the data folder untouched', () => {
    const dataDir = join(folder.dir, 'data')
    const location = locateCluster(dataDir, { ...stranger, asRoot: false }, { prepare: true, fallbackRoot })
    expect(location).toEqual({ dir: join(dataDir, 'pg'), note: null })
  })
})
