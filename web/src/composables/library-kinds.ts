import {
  defaultScenario,
  engineSchema,
  springSchema,
  supplySchema,
  toFieldIssues,
  turboSchema,
  wastegateSchema,
} from '@crackpoint/sim-core'
import type { LibraryKindKey } from '@/api/library'
import { ADVANCED_PANELS } from './scenario-sections'
import { describeField, type DescribedField } from './scenario-fields'

/** What the library needs of a sim-core schema: a check that names each field's problem. */
type PartSchema = {
  safeParse(data: unknown): { success: true; data: unknown } | { success: false; error: Parameters<typeof toFieldIssues>[0] }
}

export interface KindChoice {
  /** The field of a part's data that picks its shape. */
  field: string
  label: string
  options: readonly { value: string; title: string }[]
}

export interface KindColumn {
  /** Field of the part's data shown in the table. */
  key: string
  title: string
}

export interface LibraryKindSpec {
  key: LibraryKindKey
  /** "Wastegates": the tab. */
  title: string
  /** "wastegate": in buttons and messages. */
  singular: string
  /**
   * Where the part sits in a scenario, so its fields take the scenario form's labels and units
   * (`springs.0` for a spring).
   */
  section: string
  schema: PartSchema
  /** The data of a new part: the starting scenario's, edited from there. */
  starter: () => Record<string, unknown>
  choice?: KindChoice
  /** The data fields the form shows for a part of this shape, in order. */
  fields: (data: Record<string, unknown>) => readonly string[]
  /** Numbers in the table; sortable when the API sorts by them. */
  columns: readonly KindColumn[]
  /** Data fields the API sorts by (api/src/schemas/library.ts). */
  sortFields: readonly string[]
}

const panelFields = (id: string, prefix: string) =>
  (ADVANCED_PANELS.find((p) => p.id === id)?.paths ?? []).map((path) => path.slice(prefix.length + 1))

const REGULATOR = ['regulatorSetpointPa', 'regulatorDroopPa']

/** A 10 psi (68 948 Pa) top-port setpoint: a starting value to edit (common practice, no source). */
const SETPOINT_START_PA = 68_948

export const LIBRARY_KINDS: Readonly<Record<LibraryKindKey, LibraryKindSpec>> = {
  wastegates: {
    key: 'wastegates',
    title: 'Wastegates',
    singular: 'wastegate',
    section: 'wastegate',
    schema: wastegateSchema,
    starter: () => ({ ...defaultScenario().wastegate }),
    choice: {
      field: 'actuatorKind',
      label: 'Actuator',
      options: [
        { value: 'diaphragm', title: 'Diaphragm' },
        { value: 'piston', title: 'Piston' },
      ],
    },
    fields: () => ['valveDiameterM', 'shaftDiameterM', 'actuatorDiameterM', 'maxLiftM', 'count', ...panelFields('wastegate', 'wastegate')],
    columns: [
      { key: 'valveDiameterM', title: 'Valve' },
      { key: 'actuatorDiameterM', title: 'Actuator' },
      { key: 'maxLiftM', title: 'Full lift' },
    ],
    sortFields: ['valveDiameterM', 'actuatorDiameterM', 'maxLiftM'],
  },
  springs: {
    key: 'springs',
    title: 'Springs',
    singular: 'spring',
    section: 'springs.0',
    schema: springSchema,
    starter: () => ({ ...(defaultScenario().springs[0] as Record<string, unknown>) }),
    choice: {
      field: 'from',
      label: 'Preload given as',
      options: [
        { value: 'seat', title: 'Seat force' },
        { value: 'bench', title: 'Bench crack test' },
      ],
    },
    fields: (data) => (data.from === 'bench' ? ['benchCrackPressurePa', 'rateNPerM'] : ['seatForceN', 'rateNPerM']),
    columns: [
      { key: 'seatForceN', title: 'Seat force' },
      { key: 'benchCrackPressurePa', title: 'Bench crack' },
      { key: 'rateNPerM', title: 'Rate' },
    ],
    sortFields: ['seatForceN', 'benchCrackPressurePa', 'rateNPerM'],
  },
  turbos: {
    key: 'turbos',
    title: 'Turbos',
    singular: 'turbo',
    section: 'turbo',
    schema: turboSchema,
    starter: () => ({ ...defaultScenario().turbo }),
    fields: () => panelFields('turbo', 'turbo'),
    columns: [
      { key: 'inducerDiameterM', title: 'Inducer' },
      { key: 'compressorEfficiency', title: 'Compressor eff.' },
      { key: 'turbineEfficiency', title: 'Turbine eff.' },
    ],
    sortFields: ['compressorTipRadiusM', 'inducerDiameterM', 'compressorEfficiency', 'turbineEfficiency'],
  },
  engines: {
    key: 'engines',
    title: 'Engines',
    singular: 'engine',
    section: 'engine',
    schema: engineSchema,
    starter: () => ({ ...defaultScenario().engine }),
    fields: () => panelFields('engine', 'engine'),
    columns: [
      { key: 'displacementM3', title: 'Displacement' },
      { key: 'rpmStart', title: 'Pull from' },
      { key: 'rpmEnd', title: 'Pull to' },
    ],
    sortFields: ['displacementM3', 'rpmStart', 'rpmEnd'],
  },
  supplies: {
    key: 'supplies',
    title: 'Supplies',
    singular: 'supply',
    section: 'supply',
    schema: supplySchema,
    starter: () => supplySchema.parse({ kind: 'co2', regulatorSetpointPa: SETPOINT_START_PA }) as Record<string, unknown>,
    choice: {
      field: 'kind',
      label: 'Kind of supply',
      options: [
        { value: 'co2', title: 'CO₂ bottle' },
        { value: 'compressor', title: 'Compressor with tank' },
        { value: 'boost', title: 'Boost itself' },
      ],
    },
    fields: (data) =>
      data.kind === 'co2'
        ? [...REGULATOR, 'bottleVolumeM3', 'fillMassKg', 'bottleTemperatureK']
        : data.kind === 'compressor'
          ? [...REGULATOR, 'tankVolumeM3', 'cutInPa', 'cutOutPa', 'ratedFlowM3PerS', 'maxPressurePa', 'initialTankPa']
          : [],
    columns: [{ key: 'regulatorSetpointPa', title: 'Setpoint' }],
    sortFields: ['regulatorSetpointPa'],
  },
}

export const LIBRARY_KIND_ORDER: readonly LibraryKindKey[] = ['wastegates', 'springs', 'turbos', 'engines', 'supplies']

export function isLibraryKind(value: unknown): value is LibraryKindKey {
  return typeof value === 'string' && value in LIBRARY_KINDS
}

/** A data field of a part with the label and unit the scenario form gives it. */
export function libraryField(kind: LibraryKindSpec, key: string): DescribedField {
  const field = describeField(`${kind.section}.${key}`)
  if (!field) throw new Error(`no label for ${kind.section}.${key}`)
  return field
}

/**
 * The data of a part switched to another shape (`choice` value): what both shapes share is kept, the
 * rest starts from the schema's defaults.
 */
export function switchShape(kind: LibraryKindSpec, data: Record<string, unknown>, value: string): Record<string, unknown> {
  const field = kind.choice?.field
  if (!field) return data
  if (field === 'actuatorKind') return { ...data, actuatorKind: value }
  if (kind.key === 'springs') return { from: value, rateNPerM: data.rateNPerM }
  const setpoint = typeof data.regulatorSetpointPa === 'number' ? data.regulatorSetpointPa : SETPOINT_START_PA
  return supplySchema.parse(value === 'boost' ? { kind: value } : { kind: value, regulatorSetpointPa: setpoint }) as Record<string, unknown>
}

/** sim-core's problems with a part's data, by data field ("valveDiameterM"). */
export function checkPart(kind: LibraryKindSpec, data: unknown): { ok: true; data: unknown } | { ok: false; issues: Record<string, string> } {
  const parsed = kind.schema.safeParse(data)
  if (parsed.success) return { ok: true, data: parsed.data }
  const issues: Record<string, string> = {}
  for (const issue of toFieldIssues(parsed.error)) issues[issue.path] ??= issue.message
  return { ok: false, issues }
}
