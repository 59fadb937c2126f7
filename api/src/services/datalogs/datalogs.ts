import { createHash } from 'node:crypto';
import { interpolateSeries, withFitParameters, type PullFitReport } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import type { Config } from '../../config.ts';
import { assertOwnRecord } from '../ownership.ts';
import { AppError, type FieldErrors } from '../../errors/index.ts';
import { DatalogSeries, Scenario, Upload } from '../../models/index.ts';
import type { ApiDeps, UploadedFile } from '../../routes/route-def.ts';
import type { DatalogFitBody, DatalogMappingBody, DatalogRow, ListDatalogsQuery } from '../../schemas/datalogs.ts';
import type { ScenarioRow } from '../../schemas/scenarios.ts';
import { recordAudit, snapshotChanges } from '../audit.ts';
import type { AuthContext } from '../auth.ts';
import { assertUnitsAvailable, lockWorkspaceUnits, readMonthUnits, SERVER_PULL_UNITS, usageMonthOf } from '../compute-units.ts';
import { runScenarioPull } from '../pulls.ts';
import { storedScenarioData, validateScenarioData } from '../scenario-data.ts';
import { findScenario, presentScenario } from '../scenarios.ts';
import {
  DATALOG_QUANTITIES,
  DatalogProblem,
  detectMapping,
  parseSeries,
  readDatalogTable,
  type DatalogMapping,
  type DatalogSeries as SeriesData,
  type DatalogTable,
} from './datalog-columns.ts';
import { FitFailedError, FitTimeoutError, type FitRunnerLike } from './fit-runner.ts';

/** What the upload row keeps of the file's reading besides the bytes (`uploads.column_map`). */
interface ColumnMap {
  columns: string[];
  detected: DatalogMapping;
  mapping: DatalogMapping;
  notes: Record<string, string>;
}

/** File names and media types a CSV export comes with; browsers and loggers differ in what they send. */
const CSV_EXTENSIONS = /\.(csv|txt|log|tsv)$/i;
const CSV_TYPES = new Set(['text/csv', 'text/plain', 'text/tab-separated-values', 'application/csv', 'application/vnd.ms-excel', 'application/octet-stream', '']);

const NAME_MAX = 200;

function formatBytes(bytes: number): string {
  if (bytes >= 1024 * 1024) return `${(bytes / (1024 * 1024)).toFixed(bytes % (1024 * 1024) === 0 ? 0 : 1)} MB`;
  return `${Math.round(bytes / 1024)} kB`;
}

function problemToError(problem: DatalogProblem, at: 'file' | 'mapping'): AppError {
  const field = at === 'file' || !problem.quantity ? 'file' : `${problem.quantity}.${problem.part}`;
  const fields: FieldErrors = { [field]: problem.message };
  const what = at === 'file' ? `The file ${problem.message}.` : `The mapping cannot be used: ${problem.quantity ?? 'the file'} ${problem.message}.`;
  return new AppError(422, problem.code, what, fields);
}

/** Builders change only the logs they uploaded; admins and engineers any log of the workspace. */
function assertMayChange(auth: Pick<AuthContext, 'role' | 'userId'>, upload: Upload): void {
  if (auth.role === 'admin' || auth.role === 'engineer') return;
  if (auth.role === 'builder' && upload.uploadedBy === auth.userId) return;
  throw AppError.forbidden('Your role may not change this datalog.');
}

function present(upload: Upload, series: Pick<DatalogSeries, 'timeS' | 'boostPa' | 'mappingConfirmed'> | { durationS: number; peakBoostPa: number; mappingConfirmed: boolean }): DatalogRow {
  const map = upload.columnMap as unknown as ColumnMap;
  const summary =
    'timeS' in series
      ? { durationS: series.timeS[series.timeS.length - 1] ?? 0, peakBoostPa: Math.max(...series.boostPa) }
      : { durationS: series.durationS, peakBoostPa: series.peakBoostPa };
  return {
    id: upload.id,
    filename: upload.filename,
    byteSize: upload.byteSize,
    sha256: upload.sha256,
    rowCount: upload.rowCount ?? 0,
    uploadedBy: upload.uploadedBy,
    columns: map.columns,
    mapping: map.mapping,
    mappingConfirmed: series.mappingConfirmed,
    detectionNotes: map.notes,
    ...summary,
    createdAt: upload.createdAt.toISOString(),
    updatedAt: upload.updatedAt.toISOString(),
  };
}

function seriesColumns(series: SeriesData) {
  return {
    timeS: series.timeS,
    boostPa: series.boostPa,
    rpm: series.rpm,
    drivePa: series.drivePa,
    duty: series.duty,
    supplyPa: series.supplyPa,
    pointCount: series.timeS.length,
  };
}

function seriesOf(row: DatalogSeries): SeriesData {
  return { timeS: row.timeS, boostPa: row.boostPa, rpm: row.rpm, drivePa: row.drivePa, duty: row.duty, supplyPa: row.supplyPa };
}

/**
 * Reads an uploaded CSV log: its type, its text, a header and rows of numbers, the columns and units
 * detected, the series parsed. Only a file that passes all of it is stored, with its series, in one
 * transaction; anything else is a 4xx naming the problem with nothing written.
 */
export async function uploadDatalog(
  knex: Knex,
  config: Pick<Config, 'datalogMaxBytes'>,
  auth: Pick<AuthContext, 'workspaceId' | 'userId'>,
  file: UploadedFile | undefined,
): Promise<DatalogRow> {
  if (!file) throw AppError.validation({ file: 'is required: send the log as the form field "file"' }, 'No file was sent.');
  if (file.size > config.datalogMaxBytes) {
    const limit = formatBytes(config.datalogMaxBytes);
    throw new AppError(413, 'file_too_large', `The file is larger than the ${limit} a datalog may be.`, { file: `must be at most ${limit}` });
  }
  const filename = file.originalName.trim().slice(0, NAME_MAX) || 'datalog.csv';
  if (!CSV_EXTENSIONS.test(filename) || !CSV_TYPES.has(file.mimeType.toLowerCase())) {
    throw new AppError(415, 'not_a_datalog', `The file "${filename}" (${file.mimeType || 'no type'}) is not a CSV log.`, {
      file: 'must be a CSV file (.csv, .txt, .log or .tsv) exported from a datalogger',
    });
  }
  let table: DatalogTable;
  let detected: ReturnType<typeof detectMapping>;
  let series: SeriesData;
  try {
    table = readDatalogTable(file.buffer);
    detected = detectMapping(table);
    series = parseSeries(table, detected.mapping);
  } catch (error) {
    if (error instanceof DatalogProblem) throw problemToError(error, 'file');
    throw error;
  }
  const columnMap: ColumnMap = { columns: table.headers, detected: detected.mapping, mapping: detected.mapping, notes: detected.notes };
  return knex.transaction(async (trx) => {
    const upload = await Upload.query(trx).insertAndFetch({
      workspaceId: auth.workspaceId,
      uploadedBy: auth.userId,
      kind: 'datalog',
      filename,
      contentType: file.mimeType || 'text/csv',
      byteSize: file.size,
      sha256: createHash('sha256').update(file.buffer).digest('hex'),
      content: file.buffer,
      columnMap: columnMap as unknown as Record<string, unknown>,
      rowCount: table.rows.length,
    });
    const stored = await DatalogSeries.query(trx).insertAndFetch({ uploadId: upload.id, ...seriesColumns(series), mappingConfirmed: false });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'create',
      entityType: 'datalog',
      entityId: upload.id,
      changes: snapshotChanges({ filename, byteSize: file.size, rowCount: table.rows.length, mapping: detected.mapping }, 'to'),
    });
    return present(upload, stored);
  });
}

async function findUpload(knex: Knex, workspaceId: string, id: string): Promise<Upload> {
  const upload = await Upload.query(knex).where({ workspace_id: workspaceId, kind: 'datalog' }).findById(id);
  if (!upload) throw AppError.notFound('Datalog');
  return upload;
}

async function findSeries(knex: Knex, uploadId: string): Promise<DatalogSeries> {
  const series = await DatalogSeries.query(knex).findById(uploadId);
  // Every datalog upload is written with its series; one without is not a datalog of this API.
  if (!series) throw AppError.notFound('Datalog');
  return series;
}

export async function listDatalogs(knex: Knex, workspaceId: string, query: ListDatalogsQuery): Promise<{ items: DatalogRow[]; total: number }> {
  const base = Upload.query(knex).where({ 'uploads.workspace_id': workspaceId, 'uploads.kind': 'datalog' });
  const page = base
    .clone()
    .join('datalog_series', 'datalog_series.upload_id', 'uploads.id')
    // The summary is computed in the database so a page of logs never carries their series.
    .select(
      'uploads.*',
      knex.raw('datalog_series.mapping_confirmed as series_confirmed'),
      knex.raw('datalog_series.time_s[datalog_series.point_count] as series_duration_s'),
      knex.raw('(select max(b) from unnest(datalog_series.boost_pa) as b) as series_peak_boost_pa'),
    )
    .orderBy('uploads.created_at', 'desc')
    .orderBy('uploads.id')
    .limit(query.limit)
    .offset(query.offset);
  const [rows, total] = await Promise.all([page, base.clone().resultSize()]);
  return {
    items: rows.map((row) => {
      const extra = row as unknown as { seriesConfirmed: boolean; seriesDurationS: number; seriesPeakBoostPa: number };
      return present(row, { mappingConfirmed: extra.seriesConfirmed, durationS: Number(extra.seriesDurationS), peakBoostPa: Number(extra.seriesPeakBoostPa) });
    }),
    total,
  };
}

export async function getDatalog(knex: Knex, workspaceId: string, id: string): Promise<{ datalog: DatalogRow; series: SeriesData }> {
  const upload = await findUpload(knex, workspaceId, id);
  const series = await findSeries(knex, upload.id);
  return { datalog: present(upload, series), series: seriesOf(series) };
}

export async function deleteDatalog(knex: Knex, auth: Pick<AuthContext, 'workspaceId' | 'userId' | 'role'>, id: string): Promise<void> {
  await knex.transaction(async (trx) => {
    const upload = await findUpload(trx, auth.workspaceId, id);
    assertMayChange(auth, upload);
    // The series goes with the upload (the foreign key cascades).
    await Upload.query(trx).deleteById(upload.id);
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'delete',
      entityType: 'datalog',
      entityId: upload.id,
      changes: snapshotChanges({ filename: upload.filename, byteSize: upload.byteSize }, 'from'),
    });
  });
}

/**
 * The member's mapping: the stored file is parsed again with it and its series replaced, with the mapping
 * marked confirmed, in one transaction. A column the file does not have, a unit a quantity does not take or
 * text in a mapped column is a 422 naming `<quantity>.column` or `<quantity>.unit`, with nothing changed.
 */
export async function updateDatalogMapping(
  knex: Knex,
  auth: Pick<AuthContext, 'workspaceId' | 'userId' | 'role'>,
  id: string,
  mapping: DatalogMappingBody,
): Promise<{ datalog: DatalogRow; series: SeriesData }> {
  return knex.transaction(async (trx) => {
    const upload = await findUpload(trx, auth.workspaceId, id);
    assertMayChange(auth, upload);
    // One column cannot be two quantities.
    const fields: FieldErrors = {};
    const seen = new Map<string, string>();
    for (const quantity of DATALOG_QUANTITIES) {
      const choice = mapping[quantity];
      if (!choice) continue;
      const other = seen.get(choice.column);
      if (other) fields[`${quantity}.column`] = `is already mapped to ${other}`;
      else seen.set(choice.column, quantity);
    }
    if (Object.keys(fields).length > 0) throw AppError.validation(fields, 'A column can be mapped to one quantity only.');
    let series: SeriesData;
    try {
      series = parseSeries(readDatalogTable(upload.content), mapping);
    } catch (error) {
      if (error instanceof DatalogProblem) throw problemToError(error, 'mapping');
      throw error;
    }
    const before = upload.columnMap as unknown as ColumnMap;
    const columnMap: ColumnMap = { ...before, mapping };
    const updated = await Upload.query(trx).patchAndFetchById(upload.id, { columnMap: columnMap as unknown as Record<string, unknown> });
    const stored = await DatalogSeries.query(trx).patchAndFetchById(upload.id, { ...seriesColumns(series), mappingConfirmed: true });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'update',
      entityType: 'datalog',
      entityId: upload.id,
      changes: { mapping: { from: before.mapping, to: mapping } },
    });
    return { datalog: present(updated, stored), series };
  });
}

async function confirmedSeries(knex: Knex, workspaceId: string, id: string): Promise<{ upload: Upload; series: SeriesData }> {
  const upload = await findUpload(knex, workspaceId, id);
  const row = await findSeries(knex, upload.id);
  if (!row.mappingConfirmed) {
    throw AppError.conflict('mapping_not_confirmed', 'Confirm or change the column mapping of this log first (PUT /api/datalogs/:id/mapping).');
  }
  return { upload, series: seriesOf(row) };
}

/** Measured time and boost inside [0, durationS]. */
function insidePull(series: SeriesData, durationS: number): { timeS: number[]; boostPa: number[] } {
  const timeS: number[] = [];
  const boostPa: number[] = [];
  series.timeS.forEach((t, i) => {
    if (t <= durationS) {
      timeS.push(t);
      boostPa.push(series.boostPa[i]!);
    }
  });
  return { timeS, boostPa };
}

/** The log beside one simulated pull of the scenario (a server pull, charged as one), with their boost difference. */
export async function overlayDatalog(
  deps: Pick<ApiDeps, 'knex' | 'config' | 'pulls'>,
  auth: Pick<AuthContext, 'workspaceId' | 'userId' | 'role'>,
  id: string,
  scenarioId: string,
) {
  const { series } = await confirmedSeries(deps.knex, auth.workspaceId, id);
  const result = await runScenarioPull(deps, auth, scenarioId);
  const pull = result.pull;
  const compared = insidePull(series, pull.stats.reachedS);
  const simulatedAt = interpolateSeries(pull.series.timeS, pull.series.boostPa, compared.timeS);
  const sum = compared.boostPa.reduce((acc, b, i) => acc + (b - simulatedAt[i]!) ** 2, 0);
  const notes = [...pull.notes];
  const outside = series.timeS.length - compared.timeS.length;
  if (outside > 0) notes.unshift(`${outside} logged points lie after the end of the simulated pull (${pull.stats.reachedS.toFixed(2)} s) and are not compared.`);
  return {
    overlay: {
      scenarioId: result.scenarioId,
      scenarioVersion: result.scenarioVersion,
      measured: series,
      simulated: { timeS: pull.series.timeS, boostPa: pull.series.boostPa, drivePa: pull.series.drivePa },
      rmsBoostDifferencePa: compared.timeS.length > 0 ? Math.sqrt(sum / compared.timeS.length) : 0,
      pointsCompared: compared.timeS.length,
      notes,
    },
  };
}

/** The pulls a fit may run (sim-core's evaluation budget): reserved as compute units before it starts. */
export const FIT_PULL_BUDGET = 150;

/**
 * Holds a fit's largest cost (one unit a pull, FIT_PULL_BUDGET pulls) against the member's and the workspace's
 * units, under the workspace's units lock, or refuses with 402. The row is settled to the pulls the fit ran,
 * or removed when it produced nothing.
 */
async function reserveFitUnits(
  deps: Pick<ApiDeps, 'knex' | 'config'>,
  auth: Pick<AuthContext, 'workspaceId' | 'userId'>,
  scenarioId: string,
): Promise<string> {
  const month = usageMonthOf(new Date());
  return deps.knex.transaction(async (trx) => {
    await lockWorkspaceUnits(trx, auth.workspaceId);
    const units = await readMonthUnits(trx, deps.config, auth.workspaceId, month);
    assertUnitsAvailable(units, auth.userId, FIT_PULL_BUDGET * SERVER_PULL_UNITS, 'A datalog fit');
    const [row] = await trx('usage_ledger')
      .insert({
        workspace_id: auth.workspaceId,
        user_id: auth.userId,
        kind: 'pull',
        compute_units: FIT_PULL_BUDGET * SERVER_PULL_UNITS,
        period_month: month,
        scenario_id: scenarioId,
        note: 'datalog fit (held until it ends)',
      })
      .returning<{ id: string }[]>('id');
    if (!row) throw new Error('the fit charge was not written');
    return row.id;
  });
}

function fittedName(scenarioName: string, filename: string): string {
  const suffix = ` — fitted to ${filename}`;
  if (scenarioName.length + suffix.length <= NAME_MAX) return `${scenarioName}${suffix}`;
  return `${scenarioName.slice(0, Math.max(20, NAME_MAX - suffix.length))}${suffix}`.slice(0, NAME_MAX);
}

/**
 * Fits the ratio and seat force that best explain the log (sim-core's fitPullToLog, in a worker thread with a
 * time limit) and writes them into a new scenario copied from the one fitted, named for the log; the scenario
 * fitted is not changed, and a poor fit (sim-core's poorFit) writes nothing. The copy keeps the library sources of its engine, turbo, wastegate and supply; its
 * springs are the fitted ones, so it forgets where they came from. It costs a unit for each pull it ran:
 * FIT_PULL_BUDGET are held before it starts (402 when they are not there) and the rest given back after.
 */
export async function fitDatalog(
  deps: Pick<ApiDeps, 'knex' | 'config'> & { fits: FitRunnerLike },
  auth: Pick<AuthContext, 'workspaceId' | 'userId' | 'role'>,
  id: string,
  body: DatalogFitBody,
): Promise<{ fit: PullFitReport; scenario: ScenarioRow | null }> {
  const { knex, config } = deps;
  const { upload, series } = await confirmedSeries(knex, auth.workspaceId, id);
  const original = await findScenario(knex, auth.workspaceId, body.scenarioId);
  assertOwnRecord(auth, original.ownerId, 'A builder fits logs only to their own scenarios.');
  const data = storedScenarioData(original.data);
  const maxSteps = Math.min(data.solver.maxSteps, config.pullMaxSteps);
  const bounded = maxSteps === data.solver.maxSteps ? data : { ...data, solver: { ...data.solver, maxSteps } };

  const charge = await reserveFitUnits(deps, auth, original.id);
  let fit: PullFitReport;
  try {
    // A logged drive pressure is fitted alongside boost: it pins the ratio that boost alone only infers.
    fit = await deps.fits.run(bounded, { timeS: series.timeS, boostPa: series.boostPa, drivePa: series.drivePa }, { maxEvaluations: FIT_PULL_BUDGET });
  } catch (error) {
    await knex('usage_ledger').where({ id: charge }).delete();
    if (error instanceof FitTimeoutError) {
      throw new AppError(503, 'fit_timed_out', `The fit took longer than ${(error.limitMs / 1000).toFixed(0)} s to compute here. Try a shorter pull or try again when fewer fits are running.`);
    }
    // sim-core's message names what it refused (too few logged points inside the pull, say); it carries no server data.
    if (error instanceof FitFailedError) {
      throw new AppError(422, 'fit_failed', `The log cannot be fitted to this scenario: ${error.message}.`, { scenarioId: error.message });
    }
    throw error;
  }

  // The pulls the fit ran are what it costs, whatever came of it.
  await knex('usage_ledger')
    .where({ id: charge })
    .update({ compute_units: Math.max(1, fit.evaluations) * SERVER_PULL_UNITS, note: `datalog fit: ${fit.evaluations} pulls` });
  // A fit that does not explain the log would only put wrong numbers into a scenario: the report says so instead.
  if (fit.poorFit) return { fit: { ...fit, notes: [...fit.notes, 'No scenario was written: the fit does not explain the log.'] }, scenario: null };

  const fittedData = validateScenarioData(withFitParameters(data, { ratio: fit.ratio, seatForceN: fit.seatForceN }), 'data');
  const name = body.name ?? fittedName(original.name, upload.filename);
  const scenario = await knex.transaction(async (trx) => {
    const copy = await Scenario.query(trx).insertAndFetch({
      workspaceId: auth.workspaceId,
      ownerId: auth.userId,
      name,
      data: fittedData,
      engineId: original.engineId,
      turboId: original.turboId,
      wastegateId: original.wastegateId,
      supplyId: original.supplyId,
    });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'create',
      entityType: 'scenario',
      entityId: copy.id,
      changes: {
        ...snapshotChanges({ name, data: fittedData }, 'to'),
        fittedFrom: { to: { scenarioId: original.id, datalogId: upload.id, ratio: fit.ratio, seatForceN: fit.seatForceN, rmsResidualPa: fit.rmsResidualPa } },
      },
    });
    return copy;
  });
  return { fit, scenario: presentScenario(scenario, []) };
}
