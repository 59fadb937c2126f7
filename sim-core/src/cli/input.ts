import { readFile } from 'node:fs/promises'
import { parseScenario, toFieldIssues, type FieldIssue, type Scenario } from '../scenario.ts'
import { countPoints, resolveAxes, sweepLevelSchema, type ResolvedAxis, type SweepLevel } from '../sweep-grid.ts'

export type Read<T> = { ok: true; value: T } | { ok: false; issues: FieldIssue[] }

/** The JSON in a file; a missing file or broken JSON comes back as an issue naming the file. */
export async function readJsonFile(path: string): Promise<Read<unknown>> {
  let text: string
  try {
    text = await readFile(path, 'utf8')
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'is a folder, not a file' : String(error)
    return { ok: false, issues: [{ path: '(file)', message: `cannot read ${path}: ${why}` }] }
  }
  try {
    return { ok: true, value: JSON.parse(text) as unknown }
  } catch (error) {
    return { ok: false, issues: [{ path: '(file)', message: `${path} is not valid JSON: ${(error as Error).message}` }] }
  }
}

export function readScenario(json: unknown): Read<Scenario> {
  const parsed = parseScenario(json)
  return parsed.ok ? { ok: true, value: parsed.scenario } : { ok: false, issues: parsed.issues }
}

export interface SweepFile {
  scenario: Scenario
  axes: ResolvedAxis[]
  level: SweepLevel
  pointCount: number
}

const SWEEP_KEYS = ['scenario', 'axes', 'level']

/** A sweep file `{ scenario, axes, level }`: each part checked, every problem named by its dotted path. */
export function readSweep(json: unknown): Read<SweepFile> {
  if (json === null || typeof json !== 'object' || Array.isArray(json)) {
    return { ok: false, issues: [{ path: '(file)', message: 'a sweep file is an object { scenario, axes, level }' }] }
  }
  const record = json as Record<string, unknown>
  const issues: FieldIssue[] = Object.keys(record)
    .filter((key) => !SWEEP_KEYS.includes(key))
    .map((key) => ({ path: key, message: 'is not a known field (a sweep file has scenario, axes and level)' }))
  const scenario = parseScenario(record.scenario)
  if (!scenario.ok) issues.push(...scenario.issues.map((i) => ({ path: i.path ? `scenario.${i.path}` : 'scenario', message: i.message })))
  const level = sweepLevelSchema.default('static').safeParse(record.level)
  if (!level.success) issues.push(...toFieldIssues(level.error, 'level'))
  if (!scenario.ok || !level.success || issues.length > 0) return { ok: false, issues }
  const axes = resolveAxes(scenario.scenario, record.axes)
  if (!axes.ok) return { ok: false, issues: axes.issues }
  return {
    ok: true,
    value: { scenario: scenario.scenario, axes: axes.axes, level: level.data, pointCount: countPoints(axes.axes) },
  }
}
