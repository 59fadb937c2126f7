import { execFileSync } from 'node:child_process'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'
import { odexSolver } from '../../src/pull/odex-solver.ts'

const simCore = fileURLToPath(new URL('../..', import.meta.url))

describe('loading the odex solver', () => {
  it('solves y′ = −y under this test runner (e^−1 at t = 1)', () => {
    const solver = odexSolver(1)
    solver.relativeTolerance = 1e-10
    solver.absoluteTolerance = 1e-10
    const result = solver.solve((_t, y) => [-y[0]!], 0, [1], 1)
    expect(Math.abs(result.y[0]! - Math.exp(-1))).toBeLessThan(1e-9)
  })

  it('also runs a pull under tsx, whose tsconfig maps "odex" to its declaration file', () => {
    // The worker, the API and the command line run under tsx; a named import of odex would fail there.
    const script = "import('./src/index.ts').then((m) => console.log(m.runPull(m.defaultScenario()).stats.outcome))"
    const printed = execFileSync(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', script], {
      cwd: simCore,
      encoding: 'utf8',
      timeout: 60_000,
    })
    expect(printed.trim()).toBe('converged')
  }, 60_000)
})
