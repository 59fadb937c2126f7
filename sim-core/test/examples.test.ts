import { readdirSync, readFileSync } from 'node:fs'
import { dirname, join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'
import { readSweep } from '../src/cli/input.ts'
import { runStaticSweep } from '../src/cli/sweep-report.ts'
import { computeBalance, parseScenario } from '../src/index.ts'

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

  for (const file of scenarioFiles) {
    it(`${file} parses and its static balance opens the valve at a finite boost`, () => {
      const parsed = parseScenario(load(file))
      expect(parsed.ok ? [] : parsed.issues).toEqual([])
      if (!parsed.ok) return
      const b = computeBalance(parsed.scenario)
      expect(b.crack.status).toBe('opens')
      if (b.crack.status === 'opens') {
        expect(b.crack.boostPa).toBeGreaterThan(0)
        expect(b.overLimit).toBe(false)
      }
      expect(b.fullOpen.status).toBe('opens')
    })
  }

  for (const file of sweepFiles) {
    it(`${file} parses and every point runs at the static level`, () => {
      const sweep = readSweep(load(file))
      expect(sweep.ok ? [] : sweep.issues).toEqual([])
      if (!sweep.ok) return
      const rows = runStaticSweep(sweep.value)
      expect(rows).toHaveLength(sweep.value.pointCount)
      expect(rows.every((r) => r.static.status === 'ok' && Number.isFinite(r.static.crackBoostPa))).toBe(true)
    })
  }
})
