import { countPoints, parseScenario, resolveAxes } from '@crackpoint/sim-core';
import { enqueueChunks, jobIdFor, type SweepChunkJob } from '@crackpoint/worker';
import type { Queue } from 'bullmq';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { Config } from '../config.ts';
import { assertOwnRecord } from './ownership.ts';
import { AppError, type FieldErrors } from '../errors/index.ts';
import { Sweep, type ResolvedAxis } from '../models/index.ts';
import type { CreateSweepBody, ListSweepsQuery, SweepDetail, SweepView } from '../schemas/sweeps.ts';
import type { SweepEstimate } from '../schemas/usage.ts';
import type { AuthContext } from './auth.ts';
import { assertUnitsAvailable, estimateSweepUnits, lockWorkspaceUnits, readMonthUnits, usableBy, usageMonthOf } from './compute-units.ts';
import { findScenario } from './scenarios.ts';

/** What the API needs of the sweep queue: enqueue chunks and report its health. */
export type SweepQueue = Pick<Queue<SweepChunkJob>, 'name' | 'addBulk' | 'getJobCounts' | 'getWorkersCount' | 'getJob' | 'remove'>;

export interface SweepDeps {
  knex: Knex;
  config: Config;
  queue: SweepQueue;
  logger: Logger;
}

/** A Redis that accepts the connection but never answers must not hold the request open. */
const ENQUEUE_TIMEOUT_MS = 5000;
const CHUNK_INSERT_BATCH = 1000;

export function presentSweep(sweep: Sweep): SweepView {
  return {
    id: sweep.id,
    scenarioId: sweep.scenarioId,
    createdBy: sweep.createdBy,
    state: sweep.state,
    level: sweep.level,
    axes: sweep.axes.map((axis) => ({ path: axis.path, values: axis.values })),
    pointCount: sweep.pointCount,
    pointsDone: sweep.pointsDone,
    pointsFailed: sweep.pointsFailed,
    createdAt: sweep.createdAt.toISOString(),
    startedAt: sweep.startedAt ? sweep.startedAt.toISOString() : null,
    finishedAt: sweep.finishedAt ? sweep.finishedAt.toISOString() : null,
  };
}

async function withTimeout<T>(promise: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  try {
    return await Promise.race([
      promise,
      new Promise<never>((_resolve, reject) => {
        timer = setTimeout(() => reject(new Error(`${what} took longer than ${ms} ms`)), ms);
      }),
    ]);
  } finally {
    clearTimeout(timer);
  }
}

function issuesToFields(issues: { path: string; message: string }[]): FieldErrors {
  const fields: FieldErrors = {};
  for (const issue of issues) fields[issue.path || 'axes'] ??= issue.message;
  return fields;
}

/** A sweep as it would be created: its scenario, resolved axes, size and cost, checked but not written. */
async function planSweep(deps: SweepDeps, auth: AuthContext, input: CreateSweepBody) {
  const scenario = await findScenario(deps.knex, auth.workspaceId, input.scenarioId);
  const resolved = resolveAxes(scenario.data, input.axes);
  if (!resolved.ok) throw AppError.validation(issuesToFields(resolved.issues), 'The sweep axes are not valid.');
  const axes: ResolvedAxis[] = resolved.axes;

  const pointCount = countPoints(axes);
  if (pointCount > deps.config.sweepMaxPoints) {
    throw AppError.validation(
      { axes: `give ${pointCount} points; a sweep may have at most ${deps.config.sweepMaxPoints}` },
      'The sweep is too large.',
    );
  }
  const chunkSize = input.level === 'static' ? deps.config.sweepChunkSize : deps.config.sweepDynamicChunkSize;
  return { scenario, axes, pointCount, chunkSize, chunkCount: Math.ceil(pointCount / chunkSize), computeUnits: estimateSweepUnits(input.level, pointCount) };
}

/** What a sweep would cost and what the caller and the workspace have left this month; nothing is reserved. */
export async function estimateSweep(deps: SweepDeps, auth: AuthContext, input: CreateSweepBody): Promise<SweepEstimate> {
  const plan = await planSweep(deps, auth, input);
  const units = await readMonthUnits(deps.knex, deps.config, auth.workspaceId, usageMonthOf(new Date()));
  const left = usableBy(units, auth.userId);
  return { pointCount: plan.pointCount, computeUnits: plan.computeUnits, remaining: { member: left.member, workspace: left.workspace } };
}

export async function createSweep(deps: SweepDeps, auth: AuthContext, input: CreateSweepBody): Promise<SweepView> {
  const { scenario, axes, pointCount, chunkSize, chunkCount, computeUnits } = await planSweep(deps, auth, input);
  assertOwnRecord(auth, scenario.ownerId, 'A builder sweeps only their own scenarios.');
  const usageMonth = usageMonthOf(new Date());

  // The sweep, every chunk row and the sweep's reservation exist together or not at all; the workers
  // trust all three. The units lock makes check and reservation one step for the whole workspace.
  const sweep = await deps.knex.transaction(async (trx) => {
    await lockWorkspaceUnits(trx, auth.workspaceId);
    assertUnitsAvailable(await readMonthUnits(trx, deps.config, auth.workspaceId, usageMonth), auth.userId, computeUnits, 'This sweep');
    const row = await Sweep.query(trx).insertAndFetch({
      workspaceId: auth.workspaceId,
      scenarioId: scenario.id,
      createdBy: auth.userId,
      scenarioSnapshot: scenario.data,
      level: input.level,
      axes,
      state: 'queued',
      pointCount,
      chunkSize,
      computeUnits,
      reservedUnits: computeUnits,
      usageMonth,
    });
    const chunks = Array.from({ length: chunkCount }, (_, chunkIndex) => ({
      sweep_id: row.id,
      chunk_index: chunkIndex,
      first_index: chunkIndex * chunkSize,
      point_count: Math.min(chunkSize, pointCount - chunkIndex * chunkSize),
    }));
    await trx.batchInsert('sweep_chunks', chunks, CHUNK_INSERT_BATCH);
    return row;
  });

  // PostgreSQL is the record of what must run. If Redis refuses the jobs now, the sweep stays
  // queued there and reconciliation enqueues it again later under the same job ids.
  try {
    const chunks: SweepChunkJob[] = Array.from({ length: chunkCount }, (_, chunkIndex) => ({ sweepId: sweep.id, chunkIndex }));
    await withTimeout(enqueueChunks(deps.queue, chunks), ENQUEUE_TIMEOUT_MS, 'enqueueing sweep chunks');
  } catch (error) {
    deps.logger.error({ err: error, sweepId: sweep.id, chunkCount }, 'sweep saved but its chunks could not be enqueued');
  }

  return presentSweep(sweep);
}

async function findSweep(knex: Knex, workspaceId: string, id: string): Promise<Sweep> {
  const sweep = await Sweep.query(knex).modify('inWorkspace', workspaceId).findById(id);
  if (!sweep) throw AppError.notFound('Sweep');
  return sweep;
}

export async function getSweep(knex: Knex, workspaceId: string, id: string): Promise<SweepDetail> {
  const sweep = await findSweep(knex, workspaceId, id);
  // A snapshot the model no longer accepts must not stop the sweep's progress and results from showing.
  const snapshot = parseScenario(sweep.scenarioSnapshot);
  return { ...presentSweep(sweep), scenarioSnapshot: snapshot.ok ? snapshot.scenario : null };
}

/**
 * Stops a sweep: the state changes first, in PostgreSQL, which is what the workers check between
 * batches (under the sweep row's lock, so no point is written after this commits); then the chunks
 * still waiting in Redis are removed. A job Redis refuses to remove (running, or Redis away) finds the
 * sweep cancelled when it runs and stops without writing.
 */
export async function cancelSweep(deps: SweepDeps, auth: AuthContext, id: string): Promise<SweepView> {
  const sweep = await deps.knex.transaction(async (trx) => {
    const row = await Sweep.query(trx).modify('inWorkspace', auth.workspaceId).findById(id).forUpdate();
    if (!row) throw AppError.notFound('Sweep');
    assertOwnRecord(auth, row.createdBy, 'A builder cancels only the sweeps they started.');
    if (row.state !== 'queued' && row.state !== 'running') {
      throw new AppError(409, 'sweep_finished', `The sweep is already ${row.state}; only a queued or running sweep can be cancelled.`);
    }
    // Points already computed stay charged; the units of those never run go back to the workspace.
    return row.$query(trx).patchAndFetch({ state: 'cancelled', reservedUnits: 0, finishedAt: new Date() });
  });

  const open = await deps.knex('sweep_chunks').where({ sweep_id: sweep.id }).whereNot({ state: 'done' }).pluck<number[]>('chunk_index');
  try {
    await withTimeout(
      Promise.all(open.map((chunkIndex) => deps.queue.remove(jobIdFor({ sweepId: sweep.id, chunkIndex })))),
      ENQUEUE_TIMEOUT_MS,
      'removing cancelled chunks',
    );
  } catch (error) {
    deps.logger.warn({ err: error, sweepId: sweep.id }, 'sweep cancelled but some of its jobs could not be removed from the queue');
  }
  return presentSweep(sweep);
}

export async function listSweeps(
  knex: Knex,
  workspaceId: string,
  query: ListSweepsQuery,
): Promise<{ items: SweepView[]; total: number }> {
  const base = Sweep.query(knex).modify('inWorkspace', workspaceId);
  if (query.scenarioId) base.where('sweeps.scenario_id', query.scenarioId);
  const [rows, total] = await Promise.all([
    base.clone().orderBy('created_at', 'desc').orderBy('id').limit(query.limit).offset(query.offset),
    base.clone().resultSize(),
  ]);
  return { items: rows.map(presentSweep), total };
}

/** A metric over two axes (and a value of the third) lives with the other sweep results. */
export { getSweepSurface as getSurface } from './sweep-surface.ts';
