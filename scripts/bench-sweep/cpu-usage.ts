import { readdirSync, readFileSync } from 'node:fs'
import { availableParallelism } from 'node:os'

/**
 * Where the machine's CPU time went during a timed run, from Linux's /proc: the worker processes (point
 * threads included), PostgreSQL (the postmaster and every backend), the API, Redis, and everything else
 * on the machine. On a shared two-core machine this says plainly what limits a figure.
 */

/** Linux reports process times in clock ticks of 1/100 s (USER_HZ, fixed at 100 on every common architecture). */
const TICKS_PER_SECOND = 100

interface ProcRow {
  ppid: number
  ticks: number
}

export interface CpuSnapshot {
  at: number
  procs: Map<number, ProcRow>
  /** Busy and total ticks of the whole machine, every core summed (/proc/stat's first line). */
  machineBusy: number
  machineTotal: number
}

function readProc(pid: number): ProcRow | undefined {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8')
    // The command name may hold spaces and parentheses; the fields after its last ')' are fixed.
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ')
    // After the name: state(0) ppid(1) … utime(11) stime(12).
    return { ppid: Number(fields[1]), ticks: Number(fields[11]) + Number(fields[12]) }
  } catch {
    return undefined
  }
}

export function takeCpuSnapshot(): CpuSnapshot {
  const procs = new Map<number, ProcRow>()
  let names: string[] = []
  try {
    names = readdirSync('/proc')
  } catch {
    // Not Linux: the figures print without the breakdown.
  }
  for (const name of names) {
    if (!/^\d+$/.test(name)) continue
    const row = readProc(Number(name))
    if (row) procs.set(Number(name), row)
  }
  let machineBusy = 0
  let machineTotal = 0
  try {
    const line = readFileSync('/proc/stat', 'utf8').split('\n')[0] ?? ''
    const ticks = line.trim().split(/\s+/).slice(1).map(Number)
    // user nice system idle iowait irq softirq steal …: idle and iowait are the machine waiting.
    machineTotal = ticks.slice(0, 8).reduce((a, b) => a + b, 0)
    machineBusy = machineTotal - (ticks[3] ?? 0) - (ticks[4] ?? 0)
  } catch {
    // As above.
  }
  return { at: performance.now(), procs, machineBusy, machineTotal }
}

/** The pid and all its descendants in one snapshot. */
function tree(snapshot: CpuSnapshot, root: number): number[] {
  const children = new Map<number, number[]>()
  for (const [pid, row] of snapshot.procs) children.set(row.ppid, [...(children.get(row.ppid) ?? []), pid])
  const out: number[] = []
  const stack = [root]
  while (stack.length > 0) {
    const pid = stack.pop()!
    if (!snapshot.procs.has(pid)) continue
    out.push(pid)
    stack.push(...(children.get(pid) ?? []))
  }
  return out
}

/**
 * CPU seconds of a group between two snapshots; processes born in between count from zero. A process
 * already counted in an earlier group (`seen`) is not counted again: the benchmark is the parent of the
 * API and the workers, which have groups of their own.
 */
function groupSeconds(before: CpuSnapshot, after: CpuSnapshot, roots: readonly number[], seen: Set<number>): number {
  let ticks = 0
  for (const root of roots) {
    for (const pid of tree(after, root)) {
      if (seen.has(pid)) continue
      seen.add(pid)
      ticks += (after.procs.get(pid)?.ticks ?? 0) - (before.procs.get(pid)?.ticks ?? 0)
    }
  }
  return ticks / TICKS_PER_SECOND
}

export interface CpuShare {
  name: string
  /** CPU seconds over the run. */
  seconds: number
  /** Of every core's time over the run (1 = the whole machine). */
  share: number
}

/**
 * The named groups' CPU time (in the order given, each process in the first group that holds it), the rest of the machine (other users' programs), and what was idle.
 * Shares are of cores × wall time, so they add up to about 1.
 */
export function cpuBreakdown(before: CpuSnapshot, after: CpuSnapshot, groups: Record<string, readonly number[]>): CpuShare[] {
  const wallS = (after.at - before.at) / 1000
  const cores = availableParallelism()
  const capacity = wallS * cores
  const seen = new Set<number>()
  const rows: CpuShare[] = Object.entries(groups).map(([name, roots]) => {
    const seconds = groupSeconds(before, after, roots, seen)
    return { name, seconds, share: seconds / capacity }
  })
  const totalTicks = after.machineTotal - before.machineTotal
  if (totalTicks > 0) {
    const busyS = ((after.machineBusy - before.machineBusy) / totalTicks) * capacity
    const ours = rows.reduce((sum, row) => sum + row.seconds, 0)
    const others = Math.max(busyS - ours, 0)
    rows.push({ name: 'other programs on the machine', seconds: others, share: others / capacity })
    const idle = Math.max(capacity - busyS, 0)
    rows.push({ name: 'idle', seconds: idle, share: idle / capacity })
  }
  return rows
}

export function formatBreakdown(rows: readonly CpuShare[]): string {
  return rows
    .filter((row) => row.seconds > 0.005)
    .map((row) => `${row.name} ${(row.share * 100).toFixed(0)} %`)
    .join(', ')
}
