import { readdirSync } from 'node:fs'
import { join } from 'node:path'

// vitest's default include pattern, **/*.{test,spec}.?(c|m)[jt]s?(x).
const testFile = /\.(test|spec)\.[cm]?[jt]sx?$/
const skipped = new Set(['node_modules', 'dist', '.data', '.git', 'coverage'])

/** Test files under a folder (recursively, build output and dependencies left out); [] when there is no folder. */
export function findTestFiles(dir: string): string[] {
  let entries
  try {
    entries = readdirSync(dir, { withFileTypes: true })
  } catch {
    return []
  }
  return entries.flatMap((entry) => {
    if (entry.isDirectory()) return skipped.has(entry.name) ? [] : findTestFiles(join(dir, entry.name))
    return testFile.test(entry.name) ? [join(dir, entry.name)] : []
  })
}
