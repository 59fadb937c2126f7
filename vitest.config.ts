import { defineConfig } from 'vitest/config'

/**
 * Cross-package tests under /tests. npm test runs each project on its own (`--project`) against the
 * throwaway services; each package's own tests run with that package's config instead.
 */
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'scripts',
          include: ['tests/scripts/**/*.test.ts'],
          // These start real PostgreSQL and Redis servers of their own.
          testTimeout: 60_000,
          hookTimeout: 60_000,
        },
      },
      {
        test: {
          name: 'api',
          include: ['tests/api/**/*.test.ts'],
          testTimeout: 30_000,
          hookTimeout: 60_000,
          // One database for every file: files in parallel would see each other's rows.
          fileParallelism: false,
        },
      },
      {
        test: {
          name: 'e2e',
          include: ['tests/e2e/**/*.test.ts'],
          testTimeout: 120_000,
          hookTimeout: 120_000,
          // One browser at a time against one API and database.
          fileParallelism: false,
        },
      },
    ],
  },
})
