import { describe, expect, it } from 'vitest'
import { BENCH_PORTS, FIGURES, parseBenchArgs } from '../../scripts/bench-sweep/options.ts'
import {
  gridShape,
  median,
  medianIndex,
  medianRate,
  percentile,
  pointsPerSecond,
  ratio,
  spreadSample,
} from '../../scripts/bench-sweep/stats.ts'
import { ScriptError } from '../../scripts/lib/script-error.ts'

describe('parseBenchArgs', () => {
  it('defaults to the full run: 10,000 points, three repeats, every figure, a job slot per core, ports apart from dev and test', () => {
    const options = parseBenchArgs([], {}, 2)
    expect(options).toMatchObject({
      points: 10_000,
      scalingPoints: 2_000,
      repeats: 3,
      surfaceRequests: 200,
      concurrency: 2,
      chunkSize: undefined,
      pollMs: 250,
      quick: false,
      help: false,
      pgPort: BENCH_PORTS.postgres,
      redisPort: BENCH_PORTS.redis,
    })
    expect(options.figures).toEqual(FIGURES)
    expect([55432, 55442]).not.toContain(options.pgPort)
    expect([56379, 56389]).not.toContain(options.redisPort)
  })

  it('--quick shortens the run, and options given beside it still win', () => {
    const quick = parseBenchArgs(['--quick'], {}, 2)
    expect(quick).toMatchObject({ quick: true, points: 200, scalingPoints: 200, surfaceRequests: 50 })
    expect(parseBenchArgs(['--quick', '--points', '400'], {}, 2).points).toBe(400)
  })

  it('takes --name value and --name=value, --only with a list, and the ports from the environment', () => {
    const options = parseBenchArgs(
      ['--points=2500', '--repeats', '5', '--concurrency', '4', '--chunk-size=50', '--only', 'surface,end-to-end'],
      { CRACKPOINT_BENCH_PG_PORT: '55520', CRACKPOINT_BENCH_REDIS_PORT: '56520' },
      2,
    )
    expect(options).toMatchObject({ points: 2500, repeats: 5, concurrency: 4, chunkSize: 50, pgPort: 55520, redisPort: 56520 })
    // In the benchmark's own order, whatever the order given.
    expect(options.figures).toEqual(['end-to-end', 'surface'])
  })

  it('refuses bad options with a message that names them', () => {
    const fails = (argv: string[], env: NodeJS.ProcessEnv, message: RegExp) => {
      expect(() => parseBenchArgs(argv, env, 2)).toThrow(ScriptError)
      expect(() => parseBenchArgs(argv, env, 2)).toThrow(message)
    }
    fails(['--points', 'many'], {}, /--points needs a whole number from 1 to 1000000 \(got "many"\)/)
    fails(['--points'], {}, /--points needs a whole number/)
    fails(['--repeats', '0'], {}, /--repeats must be from 1 to 100 \(got 0\)/)
    fails(['--points', '1009'], {}, /--points 1009 is not a product of two numbers up to 1000/)
    fails(['--only', 'everything'], {}, /--only: no figure named everything/)
    fails(['--fast'], {}, /Unknown option --fast/)
    fails(['--quick=yes'], {}, /--quick takes no value/)
    fails([], { CRACKPOINT_BENCH_PG_PORT: '70000' }, /CRACKPOINT_BENCH_PG_PORT must be from 1 to 65535/)
    fails([], { CRACKPOINT_BENCH_PG_PORT: '56000', CRACKPOINT_BENCH_REDIS_PORT: '56000' }, /both 56000/)
  })
})

describe('the arithmetic of the figures', () => {
  it('median: the middle value, or the mean of the two middle ones, whatever the order', () => {
    expect(median([5, 1, 3])).toBe(3)
    expect(median([4, 1, 3, 2])).toBe(2.5)
    expect(median([7])).toBe(7)
    expect(() => median([])).toThrow(RangeError)
    expect(() => median([1, Number.NaN])).toThrow(RangeError)
  })

  it('medianIndex: which repeat gave the median (the lower middle for an even count)', () => {
    expect(medianIndex([30, 10, 20])).toBe(2)
    expect(medianIndex([40, 10, 30, 20])).toBe(3)
  })

  it('percentile by nearest rank: a value that was seen, at or above p % of them', () => {
    // 1 … 100 in falling order, so the sort is exercised.
    const hundred = Array.from({ length: 100 }, (_, i) => 100 - i)
    expect(percentile(hundred, 95)).toBe(95)
    expect(percentile(hundred, 50)).toBe(50)
    expect(percentile(hundred, 100)).toBe(100)
    expect(percentile([3, 1, 2], 95)).toBe(3)
    expect(percentile([3, 1, 2], 1)).toBe(1)
    expect(() => percentile([1], 0)).toThrow(RangeError)
    expect(() => percentile([1], 101)).toThrow(RangeError)
  })

  it('ratio and rates: measured over baseline, points over seconds, the median of the repeats\' rates', () => {
    expect(ratio(850, 1000)).toBeCloseTo(0.85, 12)
    expect(() => ratio(1, 0)).toThrow(RangeError)
    expect(pointsPerSecond(10_000, 40)).toBe(250)
    expect(() => pointsPerSecond(10, 0)).toThrow(RangeError)
    // 100 points in 1 s, 2 s and 4 s: rates 100, 50, 25 → median 50 (not 100 / median time only by chance).
    expect(medianRate(100, [4, 1, 2])).toBe(50)
    // Even count: the mean of the middle rates (100/2 = 50 and 100/1 = 100), not 100 over the mean time.
    expect(medianRate(100, [1, 2])).toBe(75)
  })

  it('gridShape: two axes whose product is the point count, as square as 1000 values an axis allows', () => {
    expect(gridShape(10_000)).toEqual({ rows: 100, columns: 100 })
    expect(gridShape(200)).toEqual({ rows: 10, columns: 20 })
    expect(gridShape(7)).toEqual({ rows: 1, columns: 7 })
    expect(gridShape(1_000_000)).toEqual({ rows: 1000, columns: 1000 })
    // 1250 × 1600 is the squarest pair, and already past 1000 values an axis.
    expect(gridShape(2_000_000)).toBeUndefined()
    expect(gridShape(1009)).toBeUndefined()
    expect(gridShape(0)).toBeUndefined()
    expect(gridShape(2.5)).toBeUndefined()
  })

  it('spreadSample: every index when few, else evenly spread from the first to near the last', () => {
    expect(spreadSample(4, 10)).toEqual([0, 1, 2, 3])
    expect(spreadSample(10_000, 4)).toEqual([0, 2500, 5000, 7500])
    const sample = spreadSample(10_000, 1000)
    expect(sample).toHaveLength(1000)
    expect(new Set(sample).size).toBe(1000)
    expect(sample.at(-1)).toBe(9990)
  })
})
