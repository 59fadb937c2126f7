import type { Scenario } from '../scenario.ts'
import type { BandBoost, SolveResult, SolveUnknown } from '../solve/target-solve.ts'
import { formatQuantity, type UnitSystem } from '../units.ts'
import { CAUTION, describeControl, describeSupply } from './describe.ts'
import { renderPairs, renderTable } from './table.ts'

const UNKNOWN_LABEL: Record<SolveUnknown, string> = {
  'seat-force': 'spring seat force',
  setpoint: 'regulator setpoint',
  'bleed-fraction': 'bleed fraction',
  duty: 'solenoid duty',
}

const TARGET_LABEL = { crack: 'crack boost', 'full-open': 'full-open boost', settled: 'settled boost of a pull' } as const

/** The unknown's value in the units a shop reads it in. */
export function formatUnknown(unknown: SolveUnknown, value: number, system: UnitSystem): string {
  switch (unknown) {
    case 'seat-force':
      return formatQuantity('force', system, value, 1)
    case 'setpoint':
      return formatQuantity('pressure', system, value)
    case 'bleed-fraction':
    case 'duty':
      return `${(value * 100).toFixed(1)} %`
  }
}

/** A target solve as the readable report of `sim solve`. */
export function renderSolve(title: string, s: Scenario, r: SolveResult, system: UnitSystem): string {
  const p = (pa: number) => formatQuantity('pressure', system, pa)
  const settled = r.target === 'settled'
  const bandRows = (band: readonly BandBoost[]) =>
    renderTable(
      ['drive-to-boost ratio', TARGET_LABEL[r.target], 'off the target', ...(settled ? ['the pull'] : [])],
      band.map((b) => [
        b.ratio.toFixed(2),
        b.boostPa === null ? (settled ? 'no settled boost' : 'never opens') : p(b.boostPa),
        b.boostPa === null ? '—' : `${b.boostPa >= r.targetBoostPa ? '+' : '−'}${p(Math.abs(b.boostPa - r.targetBoostPa))}`,
        ...(settled ? [b.settles ? 'settles' : 'hunts or still moving: its mean'] : []),
      ]),
    )
  const out: string[] = []
  out.push(`Target solve: ${title}`)
  out.push(`The ${UNKNOWN_LABEL[r.unknown]} for ${p(r.targetBoostPa)} of ${TARGET_LABEL[r.target]} (gauge); units ${system === 'us' ? 'US' : 'metric'}.`)
  out.push('')
  out.push(renderPairs([
    ['ports', describeControl(s, system)],
    ['supply', describeSupply(s, system)],
  ]))
  out.push('')
  if (r.status === 'solved') {
    const pairs: [string, string][] = [[UNKNOWN_LABEL[r.unknown], formatUnknown(r.unknown, r.value, system)]]
    if (r.benchCrackPressurePa !== null) pairs.push(['bench crack pressure in this gate', p(r.benchCrackPressurePa)])
    if (r.band.length > 1) pairs.push(['worst miss over the ratio band', p(r.worstMissPa)])
    if (r.target === 'settled') pairs.push(['pulls run', String(r.pulls)])
    out.push(renderPairs(pairs))
    out.push('')
    out.push(bandRows(r.band))
  } else {
    out.push(`Out of reach: ${r.message}.`)
    out.push(`Nearest: ${UNKNOWN_LABEL[r.unknown]} ${formatUnknown(r.unknown, r.nearest.value, system)}, which gives`)
    out.push(bandRows(r.nearest.band))
    if (r.target === 'settled') out.push(`(${r.pulls} pulls run)`)
  }
  out.push('')
  out.push(CAUTION)
  return out.join('\n')
}
