import { spawn } from 'node:child_process'
import { existsSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { repoRoot } from './repo-root.ts'

export interface VitestRun {
  name: string
  /** Working directory and --root of the run. */
  root: string
  /** The vitest config file to use. */
  config: string
  extraArgs?: readonly string[]
  /** Only for a suite that has no test files yet. */
  passWithNoTests?: boolean
}

export interface VitestOutcome {
  name: string
  passed: number
  failed: number
  skipped: number
  seconds: number
  exitCode: number
  /** Why the run counts as failed beyond its failing tests (a file that did not load, a crash). */
  note: string | null
}

interface JsonReport {
  numPassedTests: number
  numFailedTests: number
  numPendingTests: number
  numTodoTests: number
  testResults: { status: string; name: string; message?: string; assertionResults: { status: string }[] }[]
}

/**
 * Runs one `vitest run` with its usual terminal output and a JSON report beside it, and reads the counts
 * from the report. A file that fails to load has no failing test in it, so it is counted as one failure.
 */
export function runVitest(run: VitestRun, options: {
    env: NodeJS.ProcessEnv
    reportDir: string
    signal?: AbortSignal
    /** 'ignore' keeps vitest's own report off the terminal; the counts come from the JSON report either way. */
    output?: 'inherit' | 'ignore'
  }): Promise<VitestOutcome> {
  const report = join(options.reportDir, `${run.name.replaceAll('/', '-')}.json`)
  const args = [
    join(repoRoot, 'node_modules', 'vitest', 'vitest.mjs'),
    'run',
    '--root',
    run.root,
    '--config',
    run.config,
    '--reporter=default',
    '--reporter=json',
    `--outputFile.json=${report}`,
    ...(run.passWithNoTests ? ['--passWithNoTests'] : []),
    ...(run.extraArgs ?? []),
  ]
  const started = Date.now()
  return new Promise((resolvePromise) => {
    const child = spawn(process.execPath, args, {
      cwd: run.root,
      env: options.env,
      stdio: options.output ?? 'inherit',
      signal: options.signal,
    })
    let finished = false
    const finish = (exitCode: number, crash: string | null) => {
      if (finished) return
      finished = true
      const seconds = (Date.now() - started) / 1000
      const base = { name: run.name, seconds, exitCode }
      if (!existsSync(report)) {
        resolvePromise({ ...base, passed: 0, failed: 1, skipped: 0, note: crash ?? `vitest wrote no report (exit code ${exitCode})` })
        return
      }
      const data = JSON.parse(readFileSync(report, 'utf8')) as JsonReport
      const unloaded = data.testResults.filter(
        (file) => file.status === 'failed' && !file.assertionResults.some((a) => a.status === 'failed'),
      )
      let failed = data.numFailedTests + unloaded.length
      let note = unloaded.length > 0 ? `${unloaded.length} test file(s) failed to run` : null
      if (exitCode !== 0 && failed === 0) {
        failed = 1
        note = crash ?? `vitest exited with code ${exitCode} (an error outside the tests)`
      }
      resolvePromise({
        ...base,
        passed: data.numPassedTests,
        failed,
        skipped: data.numPendingTests + data.numTodoTests,
        note,
      })
    }
    child.on('error', (error) => {
      if (error.name !== 'AbortError') finish(1, `vitest could not start: ${error.message}`)
    })
    child.on('exit', (code, signal) => finish(code ?? 1, signal ? `vitest was stopped by ${signal}` : null))
  })
}
