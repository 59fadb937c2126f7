import type { BalanceResult, ForceKey } from '../balance.ts'
import type { Scenario } from '../scenario.ts'
import { formatQuantity, unitSymbol, type UnitSystem } from '../units.ts'
import { CAUTION, describeControl, describeDownstream, describeSupply, formatOutcome } from './describe.ts'
import { renderPairs, renderTable } from './table.ts'

const FORCE_LABELS: Record<ForceKey, string> = {
  drive: 'drive pressure on the valve face',
  bottom: 'bottom chamber (A_p − A_s)',
  spring: 'spring seat force',
  top: 'top chamber (A_p)',
  downstream: 'downstream on the valve back (A_v − A_s)',
}

/** The static balance as the readable report of `sim balance`. */
export function renderBalance(title: string, s: Scenario, b: BalanceResult, system: UnitSystem): string {
  const p = (pa: number) => formatQuantity('pressure', system, pa)
  const out: string[] = []
  out.push(`Static balance: ${title}`)
  out.push(
    `Pressures are gauge, above an ambient of ${formatQuantity('pressure', system, s.ambient.pressurePa)} absolute; ` +
      `units ${system === 'us' ? 'US' : 'metric'}.`,
  )
  out.push('')
  out.push('Set-up')
  out.push(
    renderPairs([
      ['wastegates', s.wastegate.count > 1 ? `${s.wastegate.count} (same crack point as one, ${s.wastegate.count} × the flow area)` : '1'],
      ['ports', describeControl(s, system)],
      ['supply', describeSupply(s, system)],
      ['drive-to-boost ratio', `${b.ratio.toFixed(2)} (drive at zero boost ${p(b.driveAtZeroBoostPa)})`],
      ['downstream of the valve', describeDownstream(s)],
    ]),
  )
  out.push('')
  out.push('Areas (each wastegate)')
  const a = b.areas
  const area = (m2: number) => formatQuantity('area', system, m2)
  out.push(
    renderPairs([
      ['valve face A_v', area(a.valveM2)],
      ['shaft A_s', area(a.shaftM2)],
      ['actuator A_p', area(a.actuatorM2)],
      ['valve back A_v − A_s', area(a.valveBackM2)],
      ['bottom chamber A_p − A_s', area(a.bottomM2)],
      ['top chamber A_p', area(a.topM2)],
    ]),
  )
  out.push('')
  out.push('Spring' + (s.springs.length > 1 ? `s (${s.springs.length} nested, in parallel)` : ''))
  out.push(
    renderPairs([
      ['seat force F0', formatQuantity('force', system, b.seatForceN)],
      ['rate k', formatQuantity('springRate', system, b.rateNPerM)],
      ['full lift', formatQuantity('smallLength', system, b.maxLiftM)],
    ]),
  )
  if (b.supply) {
    out.push('')
    out.push('Regulated supply')
    const pairs: [string, string][] = []
    if (b.supply.kind === 'co2' && b.supply.sourcePa === null) {
      pairs.push(['bottle', 'not computed: the fill is impossible'])
    } else if (b.supply.kind === 'co2' && b.supply.bottle) {
      const bottle = b.supply.bottle
      const phase = {
        'two-phase': `${formatQuantity('mass', system, bottle.liquidMassKg)} of it liquid`,
        gas: 'no liquid left: all vapour',
        supercritical: 'above the critical temperature: no liquid',
        'liquid-full': 'full of liquid',
      }[bottle.phase]
      pairs.push(['bottle', `${p(b.supply.sourcePa ?? Number.NaN)} (${phase})`])
    } else if (b.supply.kind === 'compressor') {
      pairs.push(['tank at cut-in', p(b.supply.sourcePa ?? Number.NaN)])
    }
    pairs.push([
      'top port gets',
      `${p(b.supply.deliveredPa)}${b.supply.belowSetpoint ? ' (below the setpoint: the source cannot hold it)' : ''}`,
    ])
    out.push(renderPairs(pairs))
    if (b.supply.warning) out.push(`  Warning: ${b.supply.warning}`)
  }
  out.push('')
  out.push('Result')
  out.push(
    renderPairs([
      ['crack boost', formatOutcome(b.crack, system)],
      ['full-open boost', formatOutcome(b.fullOpen, system)],
    ]),
  )
  if (b.crack.status === 'never-opens') out.push(`  ${b.crack.reason}`)
  if (b.crack.status === 'open-at-zero-boost') out.push('  The valve is already off its seat at zero boost.')
  if (b.overLimit && s.boostLimitPa !== undefined) {
    out.push(`  Over the boost limit of ${p(s.boostLimitPa)}: this spring and arrangement crack above it.`)
  }
  if (b.forcesAtCrack) {
    out.push('')
    out.push('Forces at crack (positive opens; they sum to zero)')
    out.push(
      renderTable(
        ['force', `pressure (${unitSymbol('pressure', system)})`, `area (${unitSymbol('area', system)})`, `force (${unitSymbol('force', system)})`],
        b.forcesAtCrack.map((f) => [
          FORCE_LABELS[f.key],
          f.key === 'spring' ? '—' : formatQuantity('pressure', system, f.pressurePa).split(' ')[0] ?? '',
          f.key === 'spring' ? '—' : formatQuantity('area', system, f.areaM2).split(' ')[0] ?? '',
          formatQuantity('force', system, f.forceN).split(' ')[0] ?? '',
        ]),
      ),
    )
  }
  out.push('')
  out.push('Crack and full-open boost over drive-to-boost ratios 1.0 to 2.0')
  out.push(
    renderTable(
      ['ratio', 'crack', 'full open'],
      b.ratioSweep.map((r) => [r.ratio.toFixed(2), formatOutcome(r.crack, system), formatOutcome(r.fullOpen, system)]),
    ),
  )
  out.push('')
  out.push(CAUTION)
  return out.join('\n')
}
