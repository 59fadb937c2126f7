import { execFileSync } from 'node:child_process'
import { ScriptError } from './script-error.ts'

export interface PostgresAccount {
  /** True when the scripts run as root and PostgreSQL must run as the `postgres` system user instead. */
  readonly asRoot: boolean
  readonly name: string
  readonly uid: number
  readonly gid: number
  readonly groups: readonly number[]
  /** The argv and environment that run a PostgreSQL program as this account. */
  command(argv: readonly string[], extraEnv?: Record<string, string>): { argv: string[]; env: NodeJS.ProcessEnv }
}

// Messages in English whatever the locale, so the logs we quote back read the same everywhere.
const messagesInC = { LC_MESSAGES: 'C' }

/**
 * The account PostgreSQL runs under. initdb and the server refuse to run as root, so as root they go
 * through setpriv as the `postgres` user (created by Debian's postgresql package); otherwise they run as
 * the current user.
 */
export function postgresAccount(): PostgresAccount {
  const uid = process.getuid?.() ?? -1
  if (uid !== 0) {
    return {
      asRoot: false,
      name: process.env.USER ?? String(uid),
      uid,
      gid: process.getgid?.() ?? -1,
      groups: process.getgroups?.() ?? [],
      command: (argv, extraEnv = {}) => ({ argv: [...argv], env: { ...process.env, ...messagesInC, ...extraEnv } }),
    }
  }
  let entry: string
  let groups: number[]
  try {
    entry = execFileSync('getent', ['passwd', 'postgres'], { encoding: 'utf8' }).trim()
    groups = execFileSync('id', ['-G', 'postgres'], { encoding: 'utf8' }).trim().split(/\s+/).map(Number)
  } catch {
    throw new ScriptError(
      'Running as root, PostgreSQL must run as the "postgres" system user, and there is none. ' +
        "Install Debian's postgresql package (it creates the user): apt-get install -y postgresql",
    )
  }
  const fields = entry.split(':')
  return {
    asRoot: true,
    name: 'postgres',
    uid: Number(fields[2]),
    gid: Number(fields[3]),
    groups,
    command: (argv, extraEnv = {}) => ({
      // --reset-env drops our environment, so the variables the program needs travel through env(1).
      argv: [
        'setpriv',
        '--reuid=postgres',
        '--regid=postgres',
        '--init-groups',
        '--reset-env',
        '--',
        'env',
        ...Object.entries({ ...messagesInC, ...extraEnv }).map(([k, v]) => `${k}=${v}`),
        ...argv,
      ],
      env: process.env,
    }),
  }
}
