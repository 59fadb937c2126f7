import { readFileSync } from 'node:fs'

/** The pid on the first line of a pid file, or null when the file is missing or holds no pid. */
export function readPidFile(path: string): number | null {
  let text: string
  try {
    text = readFileSync(path, 'utf8')
  } catch {
    return null
  }
  const first = text.split('\n', 1)[0]?.trim() ?? ''
  if (!/^\d+$/.test(first)) return null
  const pid = Number(first)
  return pid > 0 ? pid : null
}
