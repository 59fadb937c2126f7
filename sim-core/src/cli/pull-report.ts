import type { Scenario } from '../scenario.ts'
import type { UnitSystem } from '../units.ts'
import { CAUTION } from './describe.ts'
import type { PullOutput } from './pull-loader.ts'
import { displayUnitOfField, formatFieldValue } from './quantities.ts'
import { renderPairs } from './table.ts'

/** "settledBoostPa" → "settled boost". */
function label(key: string): string {
  const bare = key.replace(/(PaPerKg2S2|NPerM|M3PerS|KgPerS|RadS|Pa|Kg|M2|M3|N|M|S|K)$/, '')
  return bare.replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase()
}

function formatValue(key: string, value: unknown, system: UnitSystem): string {
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) return '—'
    const symbol = displayUnitOfField(key, system).symbol
    return symbol ? `${formatFieldValue(key, system, value)} ${symbol}` : formatFieldValue(key, system, value)
  }
  if (value === null || value === undefined) return '—'
  if (typeof value === 'boolean') return value ? 'yes' : 'no'
  if (typeof value === 'string') return value
  return JSON.stringify(value)
}

function pairsOf(record: Record<string, unknown>, system: UnitSystem): [string, string][] {
  return Object.entries(record)
    .filter(([, v]) => v === null || ['number', 'string', 'boolean'].includes(typeof v))
    .map(([k, v]) => [label(k), formatValue(k, v, system)])
}

/** The flags that are raised, whatever their shape: a list of names, or an object of booleans or notes. */
export function raisedFlags(flags: unknown): string[] {
  if (Array.isArray(flags)) return flags.map((f) => (typeof f === 'string' ? f : JSON.stringify(f)))
  if (flags && typeof flags === 'object') {
    return Object.entries(flags as Record<string, unknown>)
      .filter(([, v]) => v !== false && v !== null && v !== undefined)
      .map(([k, v]) => (typeof v === 'string' ? `${label(k)}: ${v}` : label(k)))
  }
  return []
}

/** One pull as the readable report of `sim pull`: metrics in the user's units, raised flags, solver statistics. */
export function renderPull(title: string, s: Scenario, result: PullOutput, system: UnitSystem): string {
  const flags = raisedFlags(result.flags)
  return [
    `Pull (${s.exhaust.mode} mode): ${title}`,
    `${s.engine.rpmStart}–${s.engine.rpmEnd} rpm over ${s.engine.pullDurationS} s; boost gauge, units ${system === 'us' ? 'US' : 'metric'}.`,
    ...(s.exhaust.mode === 'ratio'
      ? ['In ratio mode the closed-wastegate boost depends only on the ratio and the efficiencies, not on rpm or',
        'compressor size (those set spool time); use turbine mode to predict creep and closed-wastegate boost.']
      : []),
    '',
    'Metrics',
    renderPairs(pairsOf(result.metrics, system)),
    '',
    'Flags',
    flags.length === 0 ? '  none' : flags.map((f) => `  • ${f}`).join('\n'),
    '',
    'Solver',
    renderPairs(pairsOf(result.stats, system)),
    '',
    CAUTION,
  ].join('\n')
}
