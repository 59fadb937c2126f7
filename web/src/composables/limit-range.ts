/**
 * How far above the curves a limit line may sit and still be drawn: beyond it the curves would be squashed
 * into the bottom of the plot, so the plot keeps to the curves and says where the limit is instead.
 */
const ROOM = 1.3

export interface LimitRange {
  /** Upper end of the value axis. */
  top: number
  /** The limit is inside the range and drawn as a line. */
  drawLimit: boolean
}

/** The value axis for curves peaking at `peak` with an optional `limit`, both in display units. */
export function limitRange(peak: number, limit: number | null): LimitRange {
  const highest = Number.isFinite(peak) && peak > 0 ? peak : 1
  if (limit !== null && limit <= highest * ROOM) return { top: Math.max(highest, limit) * 1.08, drawLimit: true }
  return { top: highest * 1.1, drawLimit: false }
}
