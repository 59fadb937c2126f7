import { dirname, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'

/** Absolute path of the repository, found from this file so the scripts work from any working directory. */
export const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..')
