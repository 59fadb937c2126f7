/** What `services:status` reports for one service. */
export interface ServiceStatus {
  name: 'PostgreSQL' | 'Redis'
  state: 'running' | 'stopped' | 'not answering'
  pid: number | null
  port: number
  /** Where its files and its log are, for the person reading the status. */
  dir: string
  log: string
}

/** How a start ended: an instance from an earlier start was still up and is used as it is, or ours is new. */
export interface StartOutcome {
  reused: boolean
  pid: number
}
