import { spawnSync } from 'node:child_process'
import { chmodSync, copyFileSync, existsSync, mkdirSync, readFileSync, symlinkSync, utimesSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { repoRoot } from '../../scripts/lib/repo-root.ts'
import { tempDir } from './helpers.ts'

/**
 * bootstrap.sh runs in a copy of the repository's skeleton with fake `id`, `apt-get` and `npm` first on
 * the PATH, so both the root and the non-root paths run for real without installing anything.
 */
describe('bootstrap.sh', () => {
  let folder: ReturnType<typeof tempDir>
  let repo: string
  let fakeBin: string
  let calls: string

  const fake = (name: string, body: string) => {
    const path = join(fakeBin, name)
    writeFileSync(path, `#!/usr/bin/env bash\n${body}\n`)
    chmodSync(path, 0o755)
  }
  const asUser = (uid: number) => fake('id', `if [ "$1" = "-u" ]; then echo ${uid}; else exec /usr/bin/id "$@"; fi`)

  const bootstrap = (mode: string, env: Record<string, string> = {}) =>
    spawnSync('bash', [join(repo, 'scripts', 'bootstrap.sh'), mode, 'extra-argument'], {
      cwd: folder.dir,
      encoding: 'utf8',
      env: {
        ...process.env,
        PATH: `${fakeBin}:${process.env.PATH}`,
        CRACKPOINT_PG_BIN: join(repo, 'no-postgres'),
        CHROMIUM_PATH: join(repo, 'no-chromium'),
        ...env,
      },
    })

  beforeEach(() => {
    folder = tempDir('bootstrap')
    repo = join(folder.dir, 'repo')
    fakeBin = join(folder.dir, 'bin')
    calls = join(folder.dir, 'calls.log')
    mkdirSync(join(repo, 'scripts'), { recursive: true })
    mkdirSync(fakeBin)
    copyFileSync(join(repoRoot, 'scripts', 'bootstrap.sh'), join(repo, 'scripts', 'bootstrap.sh'))
    fake('apt-get', `echo "apt-get $*" >> ${calls}`)
    fake('npm', `echo "npm $*" >> ${calls}`)
  })

  afterEach(() => folder.remove())

  const called = () => (existsSync(calls) ? readFileSync(calls, 'utf8') : '')

  it('as an ordinary user, prints the one command that installs what is missing and stops', () => {
    asUser(1000)
    const result = bootstrap('test')
    expect(result.status).toBe(1)
    expect(result.stderr).toContain(
      "sudo sh -c 'apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y postgresql chromium'",
    )
    expect(result.stderr).toContain('installing them needs root')
    expect(called()).toBe('')
  })

  it('asks for chromium only when running the tests', () => {
    asUser(1000)
    const result = bootstrap('start')
    expect(result.status).toBe(1)
    expect(result.stderr).toContain('apt-get install -y postgresql\'')
    expect(result.stderr).not.toContain('chromium')
  })

  it('as root, installs the missing packages with apt-get and stops when they are still missing', () => {
    asUser(0)
    const result = bootstrap('test')
    expect(called()).toBe('apt-get update\napt-get install -y postgresql chromium\n')
    expect(result.status).toBe(1)
    expect(result.stderr).toContain('Still missing after the install: postgresql chromium')
  })

  describe('with the Debian packages present', () => {
    const present = () => {
      const pgBin = join(folder.dir, 'pg-bin')
      mkdirSync(pgBin)
      for (const name of ['initdb', 'pg_ctl']) {
        writeFileSync(join(pgBin, name), '')
        chmodSync(join(pgBin, name), 0o755)
      }
      fake('redis-server', 'exit 0')
      fake('chromium', 'exit 0')
      return { CRACKPOINT_PG_BIN: pgBin, CHROMIUM_PATH: join(fakeBin, 'chromium') }
    }
    const installed = (lockIsNewer: boolean) => {
      writeFileSync(join(repo, 'package-lock.json'), '{}')
      mkdirSync(join(repo, 'node_modules', '.bin'), { recursive: true })
      writeFileSync(join(repo, 'node_modules', '.package-lock.json'), '{}')
      const then = new Date('2026-01-01T00:00:00Z')
      const later = new Date('2026-01-02T00:00:00Z')
      utimesSync(join(repo, 'package-lock.json'), lockIsNewer ? later : then, lockIsNewer ? later : then)
      utimesSync(join(repo, 'node_modules', '.package-lock.json'), lockIsNewer ? then : later, lockIsNewer ? then : later)
      // The real tsx, so the hand-over runs a TypeScript file as the real one does.
      symlinkSync(join(repoRoot, 'node_modules', 'tsx'), join(repo, 'node_modules', 'tsx'))
      symlinkSync(join(repoRoot, 'node_modules', '.bin', 'tsx'), join(repo, 'node_modules', '.bin', 'tsx'))
      writeFileSync(
        join(repo, 'scripts', 'start.ts'),
        "const args: string[] = process.argv.slice(2)\nconsole.log(`start.ts ran in ${process.cwd()} with ${args.join(' ')}`)\n",
      )
    }

    it('hands over to the TypeScript script in the repository, passing the arguments on', () => {
      asUser(1000)
      installed(false)
      const result = bootstrap('start', present())
      expect(result.stderr).toBe('')
      expect(result.stdout).toBe(`start.ts ran in ${repo} with extra-argument\n`)
      expect(called()).toBe('')
    })

    it('runs npm ci first when package-lock.json is newer than the installed packages', () => {
      asUser(1000)
      installed(true)
      const result = bootstrap('start', present())
      expect(called()).toBe('npm ci --no-audit --no-fund\n')
      expect(result.stdout).toContain('start.ts ran')
    })
  })
})
