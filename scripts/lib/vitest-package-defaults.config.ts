import { defineConfig } from 'vitest/config'

/**
 * Used for a package that has tests but no vitest config of its own. Without it vitest would climb to the
 * repository's root config and run the cross-package tests instead of the package's.
 */
export default defineConfig({
  test: {
    testTimeout: 30_000,
    hookTimeout: 60_000,
  },
})
