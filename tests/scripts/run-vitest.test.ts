import { mkdirSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { runVitest } from '../../scripts/lib/run-vitest.ts'
import { tempDir } from './helpers.ts'

// The fixture suites live outside the repository and use vitest's globals, so they import nothing.
describe('runVitest', () => {
  let folder: ReturnType<typeof tempDir>
  let reportDir: string
  let config: string

  beforeEach(() => {
    folder = tempDir('vitest')
    reportDir = join(folder.dir, 'reports')
    mkdirSync(reportDir)
    config = join(folder.dir, 'vitest.config.mjs')
    writeFileSync(config, 'export default { test: { globals: true } }\n')
  })
  afterEach(() => folder.remove())

  const run = (name: string, files: Record<string, string>, passWithNoTests = false) => {
    const root = join(folder.dir, name)
    mkdirSync(root)
    for (const [file, text] of Object.entries(files)) writeFileSync(join(root, file), text)
    return runVitest({ name, root, config, passWithNoTests }, { env: process.env, reportDir, output: 'ignore' })
  }

  it('counts passing and failing tests, and a file that fails to load as one failure', async () => {
    const outcome = await run('mixed', {
      'a.test.js': "test('one', () => expect(1).toBe(1)); test('two', () => expect(1).toBe(1))",
      'b.test.js': "test('three', () => expect(1).toBe(2))",
      'broken.test.js': "throw new Error('cannot load')",
    })
    expect(outcome).toMatchObject({ name: 'mixed', passed: 2, failed: 2, skipped: 0, note: '1 test file(s) failed to run' })
    expect(outcome.exitCode).not.toBe(0)
  })

  it('passes a suite with no test files only when told it has none', async () => {
    expect(await run('empty-allowed', { 'README.md': 'no tests yet' }, true)).toMatchObject({ passed: 0, failed: 0 })
    const strict = await run('empty-strict', { 'README.md': 'no tests yet' })
    expect(strict.failed).toBe(1)
    expect(strict.note).toMatch(/exited with code 1/)
  })
})
