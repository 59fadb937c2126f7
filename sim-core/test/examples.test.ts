import { readdirSync, readFileSync } from 'node:fs'
import { dirname, join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'
import { readSweep } from '../src/cli/input.ts'
import { runSweep } from '../src/cli/sweep-report.ts'
import { computeBalance, parseScenario, pointAt, type Scenario } from '../src/index.ts'
import { runPull } from '../src/pull/index.ts'
import { EXAMPLE_DATALOG, exampleDatalogCsv } from './fit/example-datalog.ts'

const examples = resolve(dirname(fileURLToPath(import.meta.url)), '../../examples')
const files = readdirSync(examples).filter((f) => f.endsWith('.json')).sort()
const sweepFiles = files.filter((f) => f.endsWith('.sweep.json'))
const scenarioFiles = files.filter((f) => !f.endsWith('.sweep.json'))
const load = (file: string): unknown => JSON.parse(readFileSync(join(examples, file), 'utf8'))

describe('examples/', () => {
  it('holds at least three scenarios and a sweep, each with its line in the README', () => {
    expect(scenarioFiles.length).toBeGreaterThanOrEqual(3)
    expect(sweepFiles.length).toBeGreaterThanOrEqual(1)
    const readme = readFileSync(join(examples, 'README.md'), 'utf8')
    for (const file of files) expect(readme, `README line for ${file}`).toContain(`\`${file}\``)
  })

  const scenarioOf = (file: string): Scenario => {
    const parsed = parseScenario(load(file))
    if (!parsed.ok) throw new Error(`${file}: ${parsed.issues.map((i) => `${i.path} ${i.message}`).join('; ')}`)
    return parsed.scenario
  }

  for (const file of scenarioFiles) {
    it(`${file} parses and its static balance opens the valve at a finite boost, under the boost limit`, () => {
      const parsed = parseScenario(load(file))
      expect(parsed.ok ? [] : parsed.issues).toEqual([])
      const b = computeBalance(scenarioOf(file))
      expect(b.crack.status).toBe('opens')
      if (b.crack.status === 'opens') expect(b.crack.boostPa).toBeGreaterThan(0)
      expect(b.fullOpen.status).toBe('opens')
      expect(b.overLimit).toBe(false)
    })

    it(`${file} runs a whole pull that converges, cracks the valve and stays finite`, () => {
      const s = scenarioOf(file)
      const r = runPull(s)
      expect(r.stats.outcome).toBe('converged')
      expect(r.stats.reachedS).toBeCloseTo(s.engine.pullDurationS, 9)
      expect(r.flags.neverOpened).toBe(false)
      for (const [name, values] of Object.entries(r.series)) {
        expect(values.every((v: number) => Number.isFinite(v)), `series ${name} is finite`).toBe(true)
      }
      expect(r.metrics.crackBoostPa).not.toBeNull()
    })
  }

  for (const file of sweepFiles) {
    it(`${file} parses and every point runs at its level`, () => {
      const sweep = readSweep(load(file))
      expect(sweep.ok ? [] : sweep.issues).toEqual([])
      if (!sweep.ok) return
      const rows = runSweep(sweep.value)
      expect(rows).toHaveLength(sweep.value.pointCount)
      for (const row of rows) {
        if (row.static) expect(row.static.status === 'ok' && Number.isFinite(row.static.crackBoostPa)).toBe(true)
        if (row.dynamic) expect(row.dynamic.outcome).toBe('converged')
        expect(row.static ?? row.dynamic).toBeDefined()
      }
    })

    it(`${file}: one point of it also runs a whole pull`, () => {
      const sweep = readSweep(load(file))
      if (!sweep.ok) throw new Error('the sweep should parse')
      const last = pointAt(sweep.value.scenario, sweep.value.axes, sweep.value.pointCount - 1)
      expect(runPull(last.scenario).stats.outcome).toBe('converged')
    })
  }

  it('four-cylinder-pull.datalog.csv is the model’s own pull, as its README line says', () => {
    // When the model changes this file is due again: npx tsx sim-core/test/fit/example-datalog.ts
    expect(readFileSync(EXAMPLE_DATALOG, 'utf8')).toBe(exampleDatalogCsv())
  })
})
