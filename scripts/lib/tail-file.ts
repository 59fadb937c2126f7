import { readFileSync } from 'node:fs'

/** The last lines of a log file, indented for an error message; empty when there is no log yet. */
export function tailFile(path: string, lines = 20): string {
  let text: string
  try {
    text = readFileSync(path, 'utf8')
  } catch {
    return ''
  }
  return text
    .trimEnd()
    .split('\n')
    .slice(-lines)
    .map((line) => `    ${line}`)
    .join('\n')
}
