/**
 * Linear interpolation of a sampled series at the times `at` (both in s). `timeS` must increase. Times before
 * the first sample take the first value and times after the last take the last: a pull that stopped early holds
 * its final state rather than inventing one.
 */
export function interpolateSeries(timeS: readonly number[], values: readonly number[], at: readonly number[]): number[] {
  if (timeS.length === 0 || timeS.length !== values.length) {
    throw new RangeError(`timeS and values must be non-empty and of one length, not ${timeS.length} and ${values.length}`)
  }
  const out = new Array<number>(at.length)
  const last = timeS.length - 1
  let j = 0
  for (let i = 0; i < at.length; i++) {
    const t = at[i]!
    if (t <= timeS[0]!) {
      out[i] = values[0]!
      continue
    }
    if (t >= timeS[last]!) {
      out[i] = values[last]!
      continue
    }
    // The requested times usually increase too, so the search resumes where it left off.
    if (timeS[j]! > t) j = 0
    while (timeS[j + 1]! < t) j++
    const t0 = timeS[j]!
    const t1 = timeS[j + 1]!
    const w = t1 === t0 ? 0 : (t - t0) / (t1 - t0)
    out[i] = values[j]! + w * (values[j + 1]! - values[j]!)
  }
  return out
}
