import { runPull, withFitParameters, type FitParameters, type Scenario } from '../../src/index.ts'

/** Mulberry32: a small seeded generator, so a noisy log is the same in every run. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

/** A normal deviate by Box–Muller. */
export function gaussian(random: () => number): number {
  return Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random())
}

/**
 * A log "measured" on the model itself: the pull of `scenario` with the given ratio and seat force, boost taken
 * every `everySamples` samples with normal noise of `noisePa` (1 σ) from a seeded generator.
 */
export function syntheticLog(scenario: Scenario, p: FitParameters, noisePa: number, seed: number, everySamples = 5) {
  return syntheticLogWithDrive(scenario, p, noisePa, 0, seed, everySamples, false)
}

/** The same with drive pressure logged too, with noise of its own (`driveNoisePa`, 1 σ) after boost's. */
export function syntheticLogWithDrive(
  scenario: Scenario,
  p: FitParameters,
  noisePa: number,
  driveNoisePa: number,
  seed: number,
  everySamples = 5,
  withDrive = true,
) {
  const pull = runPull(withFitParameters(scenario, p))
  const random = seededRandom(seed)
  const timeS: number[] = []
  const boostPa: number[] = []
  const drivePa: number[] = []
  for (let i = 0; i < pull.series.timeS.length; i += everySamples) {
    timeS.push(pull.series.timeS[i]!)
    boostPa.push(pull.series.boostPa[i]! + noisePa * gaussian(random))
    if (withDrive) drivePa.push(pull.series.drivePa[i]! + driveNoisePa * gaussian(random))
  }
  return withDrive ? { timeS, boostPa, drivePa } : { timeS, boostPa }
}
