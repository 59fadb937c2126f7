import { execFile } from 'node:child_process'
import { fileURLToPath } from 'node:url'
import { promisify } from 'node:util'
import { Outcome, Solver } from 'odex'
import { describe, expect, it } from 'vitest'

const run = promisify(execFile)
const simCore = fileURLToPath(new URL('..', import.meta.url))
const repositoryRoot = fileURLToPath(new URL('../..', import.meta.url))

describe('loading odex', () => {
  it('solves y′ = −y under this test runner (e^−1 at t = 1)', () => {
    const solver = new Solver(1)
    solver.relativeTolerance = 1e-10
    solver.absoluteTolerance = 1e-10
    const result = solver.solve((_t, y) => [-y[0]!], 0, [1], 1)
    expect(result.outcome).toBe(Outcome.Converged)
    expect(Math.abs(result.y[0]! - Math.exp(-1))).toBeLessThan(1e-9)
  })

  it('runs a pull under tsx from sim-core/ and from the repository root, whose tsconfig paths map "odex" for tsc', async () => {
    // The worker, the API and the command line run under tsx, which applies tsconfig "paths" at run time too: the
    // mapping names the declaration without its extension, so tsx finds no module there and loads the package.
    const script = "import('@crackpoint/sim-core').then((m) => console.log(m.runPull(m.defaultScenario()).stats.outcome))"
    const inFolder = (cwd: string) =>
      run(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', script], { cwd, encoding: 'utf8', timeout: 60_000 })
    const printed = await Promise.all([inFolder(simCore), inFolder(repositoryRoot)])
    expect(printed.map((p) => p.stdout.trim())).toEqual(['converged', 'converged'])
  }, 60_000)
})
