import { createHash } from 'node:crypto'
import { chmodSync, existsSync, mkdirSync, statSync, type Stats } from 'node:fs'
import { dirname, join } from 'node:path'
import type { PostgresAccount } from './postgres-account.ts'

export interface ClusterLocation {
  /** The PostgreSQL data directory (the cluster). */
  dir: string
  /** Said once to the user when the cluster is not where they would look for it. */
  note: string | null
}

/** Where a cluster goes when the postgres user cannot reach the data folder (e.g. a repository under /root). */
export const fallbackClusterRoot = '/var/lib/crackpoint'

function fallbackFor(dataDir: string, root: string): string {
  const key = createHash('sha256').update(dataDir).digest('hex').slice(0, 12)
  return join(root, key, 'pg')
}

function canSearch(stats: Stats, account: PostgresAccount): boolean {
  if (stats.uid === account.uid) return (stats.mode & 0o100) !== 0
  if (stats.gid === account.gid || account.groups.includes(stats.gid)) return (stats.mode & 0o010) !== 0
  return (stats.mode & 0o001) !== 0
}

/** The first folder above `dir` (exclusive) the account may not enter, or null when the path is open. */
function firstBlockedAncestor(dir: string, account: PostgresAccount): string | null {
  const ancestors: string[] = []
  for (let current = dirname(dir); ; current = dirname(current)) {
    ancestors.unshift(current)
    if (dirname(current) === current) break
  }
  for (const folder of ancestors) {
    if (!canSearch(statSync(folder), account)) return folder
  }
  return null
}

/**
 * Finds the cluster of a data folder, and with `prepare` makes sure the postgres account can reach it.
 * Folders above the data folder belong to the user; we never loosen them. When one of them shuts the
 * postgres user out, the cluster lives under /var/lib/crackpoint instead, and the note says so.
 * The data folder itself is ours: it may get search permission (o+x, no read) for the postgres user.
 */
export function locateCluster(
  dataDir: string,
  account: PostgresAccount,
  options: { prepare: boolean; fallbackRoot?: string },
): ClusterLocation {
  const fallbackRoot = options.fallbackRoot ?? fallbackClusterRoot
  const inside = join(dataDir, 'pg')
  if (!account.asRoot) return { dir: inside, note: null }

  const fallback = fallbackFor(dataDir, fallbackRoot)
  const fallbackNote = (why: string) =>
    `PostgreSQL runs as the postgres user, ${why}; the cluster for ${dataDir} is kept in ${fallback}.`
  if (existsSync(dirname(fallback))) return { dir: fallback, note: fallbackNote('which cannot reach the data folder') }
  if (!options.prepare) return { dir: inside, note: null }

  mkdirSync(dataDir, { recursive: true })
  const blocked = firstBlockedAncestor(dataDir, account)
  if (blocked !== null) {
    mkdirSync(dirname(fallback), { recursive: true, mode: 0o755 })
    chmodSync(fallbackRoot, 0o755)
    chmodSync(dirname(fallback), 0o755)
    return { dir: fallback, note: fallbackNote(`which may not enter ${blocked}`) }
  }
  const stats = statSync(dataDir)
  if (!canSearch(stats, account)) chmodSync(dataDir, (stats.mode & 0o7777) | 0o001)
  return { dir: inside, note: null }
}
