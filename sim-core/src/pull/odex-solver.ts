import * as odexModule from 'odex'
import type { Solver } from 'odex'

type SolverClass = new (n: number) => Solver

interface NodeModuleApi {
  createRequire(url: string): { (id: string): unknown; resolve(id: string): string }
}

/**
 * A new odex solver for a system of `n` equations.
 *
 * The import is a namespace import and the class is looked up at call time, because one loader does not see
 * it: tsx applies tsconfig "paths" at run time as well, and the repository maps 'odex' to its declaration file
 * there (odex ships TypeScript source that fails `strict`, STACK.md). A named import would then fail when the
 * module is linked, taking every importer of sim-core down with it; instead, under that loader, the package's
 * own CommonJS build is required by its file path, which no path mapping touches. Bundlers and Node resolve
 * 'odex' to the package itself and never reach the fallback.
 */
export function odexSolver(n: number): Solver {
  const ns = odexModule as unknown as { Solver?: SolverClass; default?: { Solver?: SolverClass } }
  const direct = ns.Solver ?? ns.default?.Solver
  if (direct) return new direct(n)
  const nodeModule = (globalThis as { process?: { getBuiltinModule?: (id: string) => unknown } }).process?.getBuiltinModule?.(
    'node:module',
  ) as NodeModuleApi | undefined
  if (!nodeModule) throw new Error('the odex solver could not be loaded in this environment')
  const require = nodeModule.createRequire(import.meta.url)
  const file = require.resolve('odex/package.json').replace(/package\.json$/, 'src/odex.js')
  const loaded = require(file) as { Solver?: SolverClass }
  if (!loaded.Solver) throw new Error(`the odex solver was not found in ${file}`)
  return new loaded.Solver(n)
}
