/**
 * The arithmetic of the sweep benchmark, kept apart from the timing so a test can check it.
 * Every figure is printed as a ratio against a baseline measured in the same run, from medians of
 * repeats, because other processes on a shared machine move absolute timings by up to 2×.
 */

function sortedCopy(values: readonly number[], what: string): number[] {
  if (values.length === 0) throw new RangeError(`${what} of no values`)
  for (const v of values) if (!Number.isFinite(v)) throw new RangeError(`${what} of a value that is not finite (${v})`)
  return [...values].sort((a, b) => a - b)
}

/** The middle value; for an even count, the mean of the two middle values. */
export function median(values: readonly number[]): number {
  const sorted = sortedCopy(values, 'median')
  const mid = Math.floor(sorted.length / 2)
  return sorted.length % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2
}

/**
 * The p-th percentile by the nearest-rank rule: the smallest value with at least p % of the values at
 * or below it. No interpolation, so the figure is always a latency that was actually seen.
 */
export function percentile(values: readonly number[], p: number): number {
  if (!(p > 0 && p <= 100)) throw new RangeError(`percentile ${p} is outside (0, 100]`)
  const sorted = sortedCopy(values, 'percentile')
  const rank = Math.ceil((p / 100) * sorted.length)
  return sorted[Math.max(rank, 1) - 1]!
}

/** measured / baseline; a baseline of zero has no ratio. */
export function ratio(measured: number, baseline: number): number {
  if (!Number.isFinite(measured) || !Number.isFinite(baseline) || baseline <= 0) {
    throw new RangeError(`no ratio of ${measured} to a baseline of ${baseline}`)
  }
  return measured / baseline
}

export function pointsPerSecond(points: number, seconds: number): number {
  if (!(seconds > 0)) throw new RangeError(`${points} points in ${seconds} s is no rate`)
  return points / seconds
}

/** The median rate over repeats: each repeat's rate first, then the median of those. */
export function medianRate(points: number, secondsPerRepeat: readonly number[]): number {
  return median(secondsPerRepeat.map((s) => pointsPerSecond(points, s)))
}

/**
 * Two axes whose product is exactly `points`, as close to square as the per-axis limit allows (sim-core
 * takes at most `maxPerAxis` values an axis). Undefined when no such pair exists (a large prime).
 */
export function gridShape(points: number, maxPerAxis = 1000): { rows: number; columns: number } | undefined {
  if (!Number.isInteger(points) || points < 1) return undefined
  for (let rows = Math.floor(Math.sqrt(points)); rows >= 1; rows--) {
    if (points % rows !== 0) continue
    const columns = points / rows
    if (columns > maxPerAxis) return undefined
    return { rows, columns }
  }
  return undefined
}

export const formatRatio = (value: number) => `${value.toFixed(2)}×`
export const formatRate = (value: number) => `${value >= 100 ? value.toFixed(0) : value.toFixed(1)} points/s`
export const formatMs = (value: number) => `${value >= 100 ? value.toFixed(0) : value.toFixed(1)} ms`

/**
 * At most `max` indices of 0 … count−1, spread evenly over the whole range, so a sample of a grid
 * holds its easy and its hard corners in proportion.
 */
export function spreadSample(count: number, max: number): number[] {
  if (count <= max) return Array.from({ length: count }, (_, i) => i)
  return Array.from({ length: max }, (_, i) => Math.floor((i * count) / max))
}

/** Which repeat gave the median (the lower middle for an even count), to show that repeat's details. */
export function medianIndex(values: readonly number[]): number {
  sortedCopy(values, 'median index')
  const order = values.map((v, i) => ({ v, i })).sort((a, b) => a.v - b.v)
  return order[Math.floor((order.length - 1) / 2)]!.i
}
