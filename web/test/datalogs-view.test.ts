import { afterEach, describe, expect, it, vi } from 'vitest'
import { defineComponent, h } from 'vue'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import type { DatalogRow, DatalogSeries } from '@/api/datalogs'
import { useSessionStore } from '@/stores/session'
import DatalogsView from '@/views/DatalogsView.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
})

const LOG_ID = 'd0000000-0000-4000-8000-000000000001'
const SCENARIO_ID = 'c0000000-0000-4000-8000-000000000001'
const FITTED_ID = 'c0000000-0000-4000-8000-000000000002'

function datalog(confirmed: boolean): DatalogRow {
  return {
    id: LOG_ID,
    filename: 'four-cylinder-pull.csv',
    byteSize: 2100,
    sha256: 'a'.repeat(64),
    rowCount: 81,
    uploadedBy: 'u1',
    columns: ['Time (s)', 'Engine speed (rpm)', 'Boost (psi)', 'Drive pressure (psi)'],
    mapping: {
      time: { column: 'Time (s)', unit: 's' },
      boost: { column: 'Boost (psi)', unit: 'psi' },
      rpm: { column: 'Engine speed (rpm)', unit: 'rpm' },
      drive: { column: 'Drive pressure (psi)', unit: 'psi' },
      duty: null,
      supply: null,
    },
    mappingConfirmed: confirmed,
    detectionNotes: { boost: 'unit from the header', duty: 'no column named like it' },
    durationS: 4,
    peakBoostPa: 75_000,
    createdAt: '2026-12-02T08:00:00.000Z',
    updatedAt: '2026-12-02T08:00:00.000Z',
  }
}

const series: DatalogSeries = { timeS: [0, 1, 2, 3, 4], boostPa: [0, 5000, 40_000, 70_000, 68_000], rpm: [2500, 3600, 4700, 5900, 7000], drivePa: [0, 8000, 62_000, 110_000, 108_000], duty: null, supplyPa: null }

const scenario = (id: string, name: string) => ({ id, name, data: {}, version: 1, ownerId: 'u1', createdAt: '2026-12-01T08:00:00.000Z', updatedAt: '2026-12-01T08:00:00.000Z' })

const fitAnswer = {
  fit: {
    ratio: 1.6213,
    seatForceN: 309.1,
    initial: { ratio: 1.5, seatForceN: 290 },
    bounds: { ratio: [0.8, 3], seatForceN: [72.5, 1160] },
    atBound: { ratio: false, seatForceN: false },
    rmsResidualPa: 700,
    initialRmsResidualPa: 6000,
    relativeResidual: 0.02,
    poorFit: false,
    iterations: 5,
    evaluations: 17,
    converged: true,
    stop: 'small-step',
    pointsCompared: 81,
    pointsOutside: 0,
    pullOutcome: 'converged',
    fitted: { timeS: [0, 1, 2, 3, 4], boostPa: [0, 5200, 41_000, 69_000, 68_500] },
    notes: [],
  },
  scenario: scenario(FITTED_ID, 'Harrow Lane 2.0 L four — fitted to four-cylinder-pull.csv'),
}

function pageAs(role: 'engineer' | 'analyst') {
  return defineComponent({
    setup() {
      useSessionStore().user = { id: 'u1', email: `${role}@harrowlane.example`, displayName: `Shop ${role}`, role, unitSystem: 'us', workspace: { id: 'w1', name: 'Harrow Lane Boostworks' } }
      return () => h(DatalogsView)
    },
  })
}

const routes = [
  { path: '/logs', name: 'logs', component: { render: () => null } },
  { path: '/scenarios/:id', name: 'scenario', component: { render: () => null } },
]

const messagesOf = (wrapper: VueWrapper, testId: string) =>
  wrapper.find(`[data-testid="${testId}"]`).element.closest('.v-input')?.querySelector('.v-messages')?.textContent ?? ''

describe('DatalogsView', () => {
  it('shows the detected mapping, confirms it, fits and links to the fitted copy of the scenario', async () => {
    let confirmed = false
    const { fetchStub, requests } = routeFetch({
      'GET /api/datalogs': () => [200, { items: [datalog(confirmed)], total: 1 }],
      'GET /api/scenarios': () => [200, { items: [scenario(SCENARIO_ID, 'Harrow Lane 2.0 L four')], total: 1 }],
      [`GET /api/datalogs/${LOG_ID}`]: () => [200, { datalog: datalog(confirmed), series }],
      [`PUT /api/datalogs/${LOG_ID}/mapping`]: () => {
        confirmed = true
        return [200, { datalog: datalog(true), series }]
      },
      [`POST /api/datalogs/${LOG_ID}/fit`]: () => [201, fitAnswer],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('engineer'), routes, '/logs')
    await flushPromises()

    expect(wrapper.text()).toContain('four-cylinder-pull.csv')
    expect(wrapper.text()).toContain('81 rows')
    expect(wrapper.find('[data-testid="mapping-unconfirmed"]').exists()).toBe(true)
    expect(wrapper.find('[data-testid="mapping-boost-column"]').text()).toContain('Boost (psi)')
    expect(wrapper.find('[data-testid="mapping-boost-unit"]').text()).toContain('psi (gauge)')
    expect(messagesOf(wrapper, 'mapping-boost-column')).toContain('unit from the header')
    expect(wrapper.find('[data-testid="fit-button"]').attributes('disabled')).toBeDefined()
    expect(wrapper.find('[data-testid="datalog-plot"]').attributes('data-plotted')).toBe('yes')

    await wrapper.find('[data-testid="mapping-save"]').trigger('click')
    await flushPromises()
    const put = requests.find((r) => r.key === `PUT /api/datalogs/${LOG_ID}/mapping`)
    expect(put?.body).toEqual(datalog(true).mapping)
    expect(wrapper.find('[data-testid="mapping-confirmed"]').exists()).toBe(true)

    await wrapper.find('[data-testid="fit-button"]').trigger('click')
    await flushPromises()
    const report = wrapper.find('[data-testid="fit-report"]')
    expect(report.text()).toContain('1.62 : 1')
    // The report names the scenario fitted; the link names its new copy.
    expect(report.find('.v-card-title').text()).toBe('Fit to Harrow Lane 2.0 L four')
    expect(wrapper.find('[data-testid="fit-seat-force"]').text()).toMatch(/69\.5 lbf/)
    expect(wrapper.find('[data-testid="fit-converged"]').text()).toContain('Converged')
    expect(wrapper.find('[data-testid="fitted-scenario-link"]').attributes('href')).toBe(`/scenarios/${FITTED_ID}`)
    expect(requests.find((r) => r.key === `POST /api/datalogs/${LOG_ID}/fit`)?.body).toEqual({ scenarioId: SCENARIO_ID })
    // The plot now carries the logged points, the logged drive pressure and the fitted pull.
    expect(wrapper.find('[data-testid="datalog-plot"]').attributes('data-traces')).toBe('3')
  })

  it('shows the API’s mapping error under the field it names', async () => {
    const { fetchStub } = routeFetch({
      'GET /api/datalogs': () => [200, { items: [datalog(false)], total: 1 }],
      'GET /api/scenarios': () => [200, { items: [], total: 0 }],
      [`GET /api/datalogs/${LOG_ID}`]: () => [200, { datalog: datalog(false), series }],
      [`PUT /api/datalogs/${LOG_ID}/mapping`]: () => [
        422,
        { error: { code: 'datalog_not_numeric', message: 'The mapping cannot be used.', fields: { 'drive.column': 'column "Drive pressure (psi)" has text ("—") in row 9' } } },
      ],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('engineer'), routes, '/logs')
    await flushPromises()
    await wrapper.find('[data-testid="mapping-save"]').trigger('click')
    await flushPromises()
    expect(messagesOf(wrapper, 'mapping-drive-column')).toContain('has text ("—") in row 9')
    expect(wrapper.find('[data-testid="mapping-error"]').text()).toContain('The mapping cannot be used.')
  })

  it('says what is wrong with a file that is not a log, beside the upload', async () => {
    const { fetchStub } = routeFetch({
      'GET /api/datalogs': () => [200, { items: [], total: 0 }],
      'GET /api/scenarios': () => [200, { items: [], total: 0 }],
      'POST /api/datalogs': () => [422, { error: { code: 'datalog_missing_columns', message: 'The file has no column for boost.', fields: { file: 'has no column for boost' } } }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('engineer'), routes, '/logs')
    await flushPromises()
    expect(wrapper.find('[data-testid="logs-empty"]').text()).toContain('No logs yet')
    const input = wrapper.find('[data-testid="file-input"]')
    const file = new File(['Speed,Temp\n1,2\n'], 'coolant.csv', { type: 'text/csv' })
    Object.defineProperty(input.element, 'files', { value: [file] })
    await input.trigger('change')
    await flushPromises()
    expect(wrapper.find('[data-testid="upload-error"]').text()).toBe('coolant.csv has no column for boost.')
  })

  it('lets an analyst read logs without the upload or the fit', async () => {
    const { fetchStub } = routeFetch({
      'GET /api/datalogs': () => [200, { items: [datalog(true)], total: 1 }],
      'GET /api/scenarios': () => [200, { items: [scenario(SCENARIO_ID, 'Harrow Lane 2.0 L four')], total: 1 }],
      [`GET /api/datalogs/${LOG_ID}`]: () => [200, { datalog: datalog(true), series }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('analyst'), routes, '/logs')
    await flushPromises()
    expect(wrapper.find('[data-testid="drop-zone"]').exists()).toBe(false)
    expect(wrapper.find('[data-testid="fit-button"]').exists()).toBe(false)
    expect(wrapper.find('[data-testid="read-only-note"]').text()).toContain('Your role reads logs')
    expect(wrapper.text()).toContain('four-cylinder-pull.csv')
  })
})
