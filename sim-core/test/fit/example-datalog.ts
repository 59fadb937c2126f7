import { readFileSync, writeFileSync } from 'node:fs'
import { dirname, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { parseScenario, runPull, withFitParameters } from '../../src/index.ts'
import { gaussian, seededRandom } from './synthetic-log.ts'

/**
 * examples/four-cylinder-pull.datalog.csv, made on the model itself: the pull of the four-cylinder example at a
 * drive-to-boost ratio of 1.62 and a seat force of 310 N, every fifth 10 ms sample (20 rows a second) from a
 * logger clock that starts at 12.40 s, boost and drive pressure in psi with seeded normal noise of 0.1 and 0.2 psi.
 * The API and browser tests fit it and expect those two numbers back. When the model changes, run
 * `npx tsx sim-core/test/fit/example-datalog.ts` to write the file again (examples.test.ts says when it is due).
 */

const here = dirname(fileURLToPath(import.meta.url))
export const EXAMPLE_DATALOG = resolve(here, '../../../examples/four-cylinder-pull.datalog.csv')
const SCENARIO = resolve(here, '../../../examples/four-cylinder-boost-only.json')
const PSI = 6894.757 // Pa per psi (NIST SP 811)
export const EXAMPLE_FIT = { ratio: 1.62, seatForceN: 310 }

export function exampleDatalogCsv(): string {
  const parsed = parseScenario(JSON.parse(readFileSync(SCENARIO, 'utf8')))
  if (!parsed.ok) throw new Error('the four-cylinder example does not parse')
  const pull = runPull(withFitParameters(parsed.scenario, EXAMPLE_FIT))
  const random = seededRandom(20261202)
  const rows = ['Time (s),Engine speed (rpm),Boost (psi),Drive pressure (psi)']
  const s = pull.series
  for (let i = 0; i < s.timeS.length; i += 5) {
    const boost = s.boostPa[i]! / PSI + 0.1 * gaussian(random)
    const drive = s.drivePa[i]! / PSI + 0.2 * gaussian(random)
    rows.push([(12.4 + s.timeS[i]!).toFixed(2), Math.round(s.rpm[i]!), boost.toFixed(2), drive.toFixed(2)].join(','))
  }
  return `${rows.join('\n')}\n`
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  writeFileSync(EXAMPLE_DATALOG, exampleDatalogCsv())
  console.log(`wrote ${EXAMPLE_DATALOG}`)
}
