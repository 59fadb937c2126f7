import { existsSync } from 'node:fs'
import { join } from 'node:path'
import { repoRoot } from './repo-root.ts'
import { runCommand } from './run-command.ts'
import { ScriptError } from './script-error.ts'

export interface BuildWebOptions {
  /** Where the built app goes; vite's own setting (web/dist) when omitted. */
  outDir?: string
  signal?: AbortSignal
}

/** Builds the Vue app with vite (run by path, not npx, so the process we wait on is vite itself). */
export async function buildWeb(options: BuildWebOptions = {}): Promise<{ seconds: number }> {
  const webDir = join(repoRoot, 'web')
  if (!existsSync(join(webDir, 'index.html'))) {
    throw new ScriptError(`The web app cannot be built: ${join(webDir, 'index.html')} does not exist yet.`)
  }
  const started = Date.now()
  const outDir = options.outDir === undefined ? [] : ['--outDir', options.outDir, '--emptyOutDir']
  await runCommand([process.execPath, join(repoRoot, 'node_modules', 'vite', 'bin', 'vite.js'), 'build', ...outDir], {
    cwd: webDir,
    signal: options.signal,
  }).catch((error: unknown) => {
    throw new ScriptError(`Building the web app failed.\n${error instanceof Error ? error.message : String(error)}`)
  })
  return { seconds: (Date.now() - started) / 1000 }
}
