import { displayUnits, fromSI, quantityOfField, units, type Quantity, type Unit } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import type { ResolvedAxis, Sweep } from '../models/index.ts';
import { StreamReply } from '../routes/route-def.ts';
import type { ExportPointsQuery, ExportUnitSystem } from '../schemas/sweep-results.ts';
import { FLAG_METRICS, METRIC_COLUMNS, type SurfaceMetric } from '../schemas/sweeps.ts';
import { findWorkspaceSweep, metricsOfLevel } from './sweep-results-common.ts';
import { checkFilter, pointColumns, withFilter, type StoredPointRow } from './sweep-points.ts';

/** Rows read per query: each page is its own short query, so no connection is held while the client reads. */
const PAGE_ROWS = 2000;

/** What each stored metric is, for its heading and its unit; pressures are gauge. */
const METRIC_HEADINGS: Record<SurfaceMetric, { label: string; quantity: Quantity | 'flag' | 'plain' }> = {
  crackBoostPa: { label: 'crack boost', quantity: 'pressure' },
  fullOpenBoostPa: { label: 'full-open boost', quantity: 'pressure' },
  dynamicCrackBoostPa: { label: 'crack boost in the pull', quantity: 'pressure' },
  peakBoostPa: { label: 'peak boost', quantity: 'pressure' },
  settledBoostPa: { label: 'settled boost', quantity: 'pressure' },
  staticBoostAtSettledLiftPa: { label: 'static boost at settled lift', quantity: 'pressure' },
  overshootPa: { label: 'overshoot', quantity: 'pressure' },
  timeTo90PercentS: { label: 'time to 90 % boost', quantity: 'time' },
  creepPa: { label: 'creep', quantity: 'pressure' },
  peakDrivePa: { label: 'peak drive pressure', quantity: 'pressure' },
  driveRatioSeen: { label: 'drive-to-boost ratio seen', quantity: 'ratio' },
  maxLiftFraction: { label: 'maximum lift fraction', quantity: 'ratio' },
  gasUsedPerPullKg: { label: 'gas used per pull', quantity: 'gasMass' },
  pullsPerSupply: { label: 'pulls per bottle or tank', quantity: 'plain' },
  boostSwingPa: { label: 'boost swing after the crack', quantity: 'pressure' },
  armedGasKgPerS: { label: 'gas passed while armed', quantity: 'massFlow' },
  sessionGasKg: { label: 'gas for the planned session', quantity: 'gasMass' },
  overBoostLimit: { label: 'over boost limit', quantity: 'flag' },
  heldOpenByDrive: { label: 'held open by drive pressure', quantity: 'flag' },
  supplyBelowSetpoint: { label: 'supply below setpoint', quantity: 'flag' },
  pastZeroFlowLine: { label: 'past zero-flow line', quantity: 'flag' },
  notSettled: { label: 'not settled', quantity: 'flag' },
  hunting: { label: 'boost hunts', quantity: 'flag' },
  portLag: { label: 'port lag', quantity: 'flag' },
  targetUnreachable: { label: 'target out of reach', quantity: 'flag' },
};

/** Each quantity in SI, beside sim-core's US and metric display units. */
const SI_UNITS: Readonly<Record<Quantity, Unit>> = {
  pressure: units.Pa,
  length: units.m,
  smallLength: units.m,
  force: units.N,
  springRate: units.NPerM,
  temperature: units.K,
  area: units.m2,
  volume: units.m3,
  smallVolume: units.m3,
  volumeFlow: units.m3PerS,
  mass: units.kg,
  gasMass: units.kg,
  massFlow: units.kgPerS,
  speed: units.radPerS,
  time: units.s,
  ratio: units.ratio,
};

function unitFor(quantity: Quantity, system: ExportUnitSystem): Unit {
  return system === 'si' ? SI_UNITS[quantity] : displayUnits[system][quantity];
}

/** A number as it is written: exact in SI, to ten significant figures once converted (no 0.1 + 0.2 noise). */
function numberText(siValue: number, unit: Unit | null): string {
  if (!unit || (unit.factor === 1 && unit.offset === 0)) return String(siValue);
  return String(Number.parseFloat(fromSI(unit, siValue).toPrecision(10)));
}

/** Formulas are not data: a text cell a spreadsheet would run is kept as text (OWASP's CSV-injection advice). */
function textCell(text: string): string {
  return /^[=+\-@\t\r]/.test(text) ? `'${text}` : text;
}

/** RFC 4180: a field with a comma, a quote or a line break is quoted, its quotes doubled. */
export function csvField(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

function csvLine(fields: readonly string[]): string {
  return `${fields.map(csvField).join(',')}\r\n`;
}

function heading(label: string, unit: Unit | null): string {
  return unit && unit.symbol !== '' ? `${label} (${unit.symbol})` : label;
}

const AXIS_COLUMNS = ['axis0', 'axis1', 'axis2'] as const;

interface Column {
  heading: string;
  cell(row: StoredPointRow): string;
}

function columnsFor(axes: readonly ResolvedAxis[], level: Sweep['level'], system: ExportUnitSystem): Column[] {
  const columns: Column[] = [{ heading: 'index', cell: (row) => String(row.point_index) }];
  axes.forEach((axis, a) => {
    // sim-core's naming rule: a field's name ends in its SI unit (seatForceN, regulatorSetpointPa).
    const quantity = quantityOfField(axis.path);
    const unit = quantity === null ? null : unitFor(quantity, system);
    const key = AXIS_COLUMNS[a] ?? 'axis0';
    columns.push({
      heading: heading(axis.path, unit),
      cell: (row) => {
        const value = row[key];
        return typeof value === 'number' ? numberText(value, unit) : '';
      },
    });
  });
  columns.push({ heading: 'status', cell: (row) => row.status });
  if (level !== 'static') columns.push({ heading: 'dynamic status', cell: (row) => row.dynamic_status ?? '' });
  for (const metric of metricsOfLevel(level)) {
    const { label, quantity } = METRIC_HEADINGS[metric];
    const unit = quantity === 'flag' || quantity === 'plain' ? null : unitFor(quantity, system);
    const column = METRIC_COLUMNS[metric];
    columns.push({
      heading: heading(label, unit),
      cell: (row) => {
        const value = row[column];
        if (value === null || value === undefined) return '';
        if (FLAG_METRICS.has(metric) || typeof value === 'boolean') return value ? 'true' : 'false';
        return typeof value === 'number' ? numberText(value, unit) : '';
      },
    });
  }
  columns.push({ heading: 'error', cell: (row) => (row.error === null ? '' : textCell(row.error)) });
  return columns;
}

/** "Harrow Lane street build" + sweep → harrow-lane-street-build-sweep-2026-12-02-1a2b3c4d.csv */
export function exportFileName(scenarioName: string, sweep: Pick<Sweep, 'id' | 'createdAt'>): string {
  const slug =
    scenarioName
      .normalize('NFKD')
      .replace(/[\u0300-\u036f]/g, '')
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, '-')
      .replace(/^-+|-+$/g, '')
      .slice(0, 60)
      .replace(/-+$/, '') || 'scenario';
  return `${slug}-sweep-${sweep.createdAt.toISOString().slice(0, 10)}-${sweep.id.slice(0, 8)}.csv`;
}

/**
 * Every point of a sweep as CSV, in index order, written as it is read: keyset pages of the primary
 * key (index > last one), each its own query, so neither the rows nor a connection are held while the
 * client reads, and a client that leaves stops the reading at the next page.
 */
export async function exportSweepPoints(knex: Knex, workspaceId: string, id: string, query: ExportPointsQuery): Promise<StreamReply> {
  const sweep = await findWorkspaceSweep(knex, workspaceId, id);
  checkFilter(sweep, query);
  const scenario = await knex('scenarios').where({ id: sweep.scenarioId }).first<{ name: string } | undefined>('name');
  const columns = columnsFor(sweep.axes, sweep.level, query.units);
  const selected = pointColumns(sweep.level);

  async function* rows(): AsyncGenerator<string> {
    yield csvLine(columns.map((column) => column.heading));
    let after = -1;
    for (;;) {
      const page = await withFilter(knex('sweep_points').where('sweep_id', sweep.id).where('point_index', '>', after), query)
        .orderBy('point_index')
        .limit(PAGE_ROWS)
        .select<StoredPointRow[]>(selected);
      if (page.length === 0) return;
      yield page.map((row) => csvLine(columns.map((column) => column.cell(row)))).join('');
      after = page[page.length - 1]?.point_index ?? after;
      if (page.length < PAGE_ROWS) return;
    }
  }

  return new StreamReply({
    contentType: 'text/csv; charset=utf-8; header=present',
    source: rows(),
    filename: exportFileName(scenario?.name ?? 'scenario', sweep),
  });
}
