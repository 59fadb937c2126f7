import { readFileSync } from 'node:fs'

export interface ProcessInfo {
  alive: boolean
  /** The kernel's short command name (`/proc/<pid>/comm`), or null when it cannot be read. */
  command: string | null
}

/**
 * Whether a pid is a live process and which program it is. A recorded pid can be reused by an unrelated
 * program after a crash or a reboot, so callers compare `command` before treating it as their own.
 */
export function inspectProcess(pid: number): ProcessInfo {
  try {
    process.kill(pid, 0)
  } catch (error) {
    // EPERM: it exists but belongs to another user; still alive.
    if ((error as NodeJS.ErrnoException).code !== 'EPERM') return { alive: false, command: null }
  }
  let command: string | null = null
  try {
    command = readFileSync(`/proc/${pid}/comm`, 'utf8').trim()
    // A zombie has exited and only waits to be reaped (a container's init may never reap it).
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8')
    const state = stat.slice(stat.lastIndexOf(')') + 2, stat.lastIndexOf(')') + 3)
    if (state === 'Z' || state === 'X') return { alive: false, command }
  } catch {
    // No /proc (not Linux) or the process ended between the two reads.
  }
  return { alive: true, command }
}
