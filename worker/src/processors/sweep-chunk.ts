import { parseScenario } from '@crackpoint/sim-core';
import { UnrecoverableError } from 'bullmq';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { z } from 'zod';
import { sweepUnitsSplit } from '../compute-units.ts';
import type { ComputeBatch, PointBatch } from '../points/point-pool.ts';
import { computePointRow, POINT_ROW_UPDATE_COLUMNS, SWEEP_LEVELS, type PointRow, type SweepLevel } from '../points/point-row.ts';
import { sweepChunkJobSchema } from '../queues.ts';

export { computePointRow, type PointRow } from '../points/point-row.ts';

export interface SweepChunkDeps {
  /** A plain knex (real snake_case column names). */
  knex: Knex;
  logger?: Logger;
  /** Where points are computed; left out, on the calling thread (tests, tiny static sweeps). */
  compute?: ComputeBatch;
}

export interface SweepChunkOutcome {
  sweepId: string;
  chunkIndex: number;
  /** Points computed by this run (0 when the chunk was already done or the sweep is gone). */
  computed: number;
  failed: number;
  sweepState: string;
  skipped?: 'sweep-missing' | 'sweep-stopped' | 'chunk-already-done';
}

/**
 * Points per batch: the sweep's state is checked and progress recorded between batches, so a cancel
 * takes effect within one batch. A static point takes microseconds, a dynamic one a whole pull.
 */
const BATCH_POINTS = { static: 500, dynamic: 16, both: 16 } as const;

const axesSchema = z
  .array(z.object({ path: z.string().min(1), values: z.array(z.number()).min(1) }))
  .min(1)
  .max(3);
const levelSchema = z.enum(SWEEP_LEVELS);

interface SweepRow {
  id: string;
  state: string;
  level: string;
  scenario_snapshot: unknown;
  axes: unknown;
}

interface ChunkRow {
  first_index: number;
  point_count: number;
  state: string;
}

const computeHere: ComputeBatch = async (batch: PointBatch) =>
  batch.indices.map((index) => computePointRow(batch.sweepId, batch.scenario, batch.axes, index, batch.level));

const STOPPED_STATES = ['cancelled', 'failed'];

/**
 * The chunk's final counters are recounted from sweep_points, so whatever a crashed or repeated run left
 * behind, a finished chunk's numbers are the table's. Between batches they are only added to (see
 * writeBatch): recounting the whole sweep after every batch would cost O(points²) over a large sweep.
 */
async function recount(trx: Knex.Transaction, sweepId: string): Promise<{ done: number; failed: number }> {
  const counts = await trx('sweep_points')
    .where({ sweep_id: sweepId })
    .first<{ done: string; failed: string }>(trx.raw('count(*) as done'), trx.raw("count(*) filter (where status = 'failed') as failed"));
  return { done: Number(counts?.done ?? 0), failed: Number(counts?.failed ?? 0) };
}

/** The sweep row as the batch and finish steps read it, under its lock. */
interface LockedSweep {
  state: string;
  level: SweepLevel;
  workspace_id: string;
  created_by: string | null;
  points_done: number;
  points_failed: number;
  compute_units: number;
  usage_month: string | null;
}

async function lockSweep(trx: Knex.Transaction, sweepId: string): Promise<LockedSweep | undefined> {
  return trx('sweeps')
    .where({ id: sweepId })
    .forUpdate()
    .first<LockedSweep | undefined>(
      'state',
      'level',
      'workspace_id',
      'created_by',
      'points_done',
      'points_failed',
      'compute_units',
      // As text: a date column would come back as a Date at local midnight.
      trx.raw("to_char(coalesce(usage_month, date_trunc('month', created_at at time zone 'UTC')), 'YYYY-MM-DD') as usage_month"),
    );
}

/**
 * Books what the sweep's computed points cost and lowers its reservation, inside the transaction that
 * wrote the points and under the sweep row's lock. The charge is the cost of every ok point less what
 * the ledger already holds for the sweep, so a repeated chunk (its points upserted to the same rows,
 * the counters recounted to the same numbers) books nothing more. Failed points cost nothing.
 */
async function chargeSweep(
  trx: Knex.Transaction,
  sweepId: string,
  sweep: LockedSweep,
  counts: { done: number; failed: number },
  finished: boolean,
): Promise<void> {
  const split = sweepUnitsSplit(sweep.level, sweep.compute_units, counts.done, counts.failed);
  const booked = await trx('usage_ledger')
    .where({ sweep_id: sweepId, kind: 'sweep' })
    .first<{ units: string | null }>(trx.raw('sum(compute_units) as units'));
  const charge = split.spent - Number(booked?.units ?? 0);
  if (charge > 0) {
    await trx('usage_ledger').insert({
      workspace_id: sweep.workspace_id,
      user_id: sweep.created_by,
      kind: 'sweep',
      compute_units: charge,
      period_month: sweep.usage_month,
      sweep_id: sweepId,
      note: `${counts.done - counts.failed} points computed`,
    });
  }
  await trx('sweeps')
    .where({ id: sweepId })
    .update({ reserved_units: finished ? 0 : split.reserved });
}

/**
 * Writes one batch unless the sweep was stopped meanwhile. The sweep row is locked first: a cancel
 * (an update of that row) either committed before, and nothing is written, or waits until this batch
 * is in, so no point lands after a cancel. The batch's spend is booked in the same transaction.
 */
async function writeBatch(knex: Knex, sweepId: string, rows: PointRow[]): Promise<'written' | 'stopped'> {
  return knex.transaction(async (trx) => {
    const sweep = await lockSweep(trx, sweepId);
    if (!sweep || STOPPED_STATES.includes(sweep.state)) return 'stopped';
    // Under the sweep row's lock no other run writes this sweep's points, so what is there now is what
    // this batch does not add. A point is a pure function of its index: a row written again keeps its status.
    const present = new Set(
      await trx('sweep_points')
        .where({ sweep_id: sweepId })
        .whereIn(
          'point_index',
          rows.map((row) => row.point_index),
        )
        .pluck<number[]>('point_index'),
    );
    await trx('sweep_points').insert(rows).onConflict(['sweep_id', 'point_index']).merge([...POINT_ROW_UPDATE_COLUMNS]);
    const added = rows.filter((row) => !present.has(row.point_index));
    const counts = {
      done: sweep.points_done + added.length,
      failed: sweep.points_failed + added.filter((row) => row.status === 'failed').length,
    };
    await trx('sweeps')
      .where({ id: sweepId })
      .update({ points_done: counts.done, points_failed: counts.failed, updated_at: trx.fn.now() });
    await chargeSweep(trx, sweepId, sweep, counts, false);
    return 'written';
  });
}

/**
 * The sweep row is locked first so two chunks finishing together are serialised and the last one
 * sees every other chunk done.
 */
async function finishChunk(knex: Knex, sweepId: string, chunkIndex: number): Promise<string> {
  return knex.transaction(async (trx) => {
    const sweep = await lockSweep(trx, sweepId);
    if (!sweep) return 'missing';
    await trx('sweep_chunks')
      .where({ sweep_id: sweepId, chunk_index: chunkIndex })
      .update({ state: 'done', updated_at: trx.fn.now() });
    const counts = await recount(trx, sweepId);
    const open = await trx('sweep_chunks')
      .where({ sweep_id: sweepId })
      .whereNot({ state: 'done' })
      .first<{ n: string }>(trx.raw('count(*) as n'));
    const allDone = Number(open?.n ?? 0) === 0;
    // A sweep already failed or cancelled keeps that state; its counters still tell what got done.
    const stopped = STOPPED_STATES.includes(sweep.state);
    const state = stopped ? sweep.state : allDone ? 'done' : 'running';
    await trx('sweeps')
      .where({ id: sweepId })
      .update({
        points_done: counts.done,
        points_failed: counts.failed,
        state,
        started_at: trx.raw('coalesce(started_at, now())'),
        finished_at: allDone || stopped ? trx.raw('coalesce(finished_at, now())') : null,
        updated_at: trx.fn.now(),
      });
    // A stopped sweep's spend stands as its last batch booked it; a finished one releases what is left.
    if (!stopped) await chargeSweep(trx, sweepId, sweep, counts, allDone);
    else await trx('sweeps').where({ id: sweepId }).update({ reserved_units: 0 });
    return state;
  });
}

/** Computes one chunk of a sweep and records it; safe to run any number of times. */
export async function processSweepChunk(deps: SweepChunkDeps, payload: unknown): Promise<SweepChunkOutcome> {
  const job = sweepChunkJobSchema.safeParse(payload);
  if (!job.success) throw new UnrecoverableError(`sweep chunk payload is not valid: ${job.error.issues[0]?.message ?? ''}`);
  const { sweepId, chunkIndex } = job.data;
  const { knex } = deps;
  const compute = deps.compute ?? computeHere;

  const sweep = await knex('sweeps')
    .where({ id: sweepId })
    .first<SweepRow | undefined>('id', 'state', 'level', 'scenario_snapshot', 'axes');
  // Deleted with its scenario or workspace (the cascade took the chunks too): nothing left to do.
  if (!sweep) return { sweepId, chunkIndex, computed: 0, failed: 0, sweepState: 'missing', skipped: 'sweep-missing' };
  if (STOPPED_STATES.includes(sweep.state)) {
    return { sweepId, chunkIndex, computed: 0, failed: 0, sweepState: sweep.state, skipped: 'sweep-stopped' };
  }

  const chunk = await knex('sweep_chunks')
    .where({ sweep_id: sweepId, chunk_index: chunkIndex })
    .first<ChunkRow | undefined>('first_index', 'point_count', 'state');
  if (!chunk) throw new UnrecoverableError(`sweep ${sweepId} has no chunk ${chunkIndex}`);
  if (chunk.state === 'done') {
    const sweepState = await finishChunk(knex, sweepId, chunkIndex);
    return { sweepId, chunkIndex, computed: 0, failed: 0, sweepState, skipped: 'chunk-already-done' };
  }

  const parsedScenario = parseScenario(sweep.scenario_snapshot);
  if (!parsedScenario.ok) throw new UnrecoverableError(`sweep ${sweepId} holds a scenario that is not valid`);
  const parsedAxes = axesSchema.safeParse(sweep.axes);
  if (!parsedAxes.success) throw new UnrecoverableError(`sweep ${sweepId} holds axes that are not valid`);
  const parsedLevel = levelSchema.safeParse(sweep.level);
  if (!parsedLevel.success) throw new UnrecoverableError(`sweep ${sweepId} has a level that is not known`);
  const scenario = parsedScenario.scenario;
  const axes = parsedAxes.data;
  const level = parsedLevel.data;

  await knex.transaction(async (trx) => {
    await trx('sweep_chunks')
      .where({ sweep_id: sweepId, chunk_index: chunkIndex })
      .update({ state: 'running', attempts: trx.raw('attempts + 1'), updated_at: trx.fn.now() });
    await trx('sweeps')
      .where({ id: sweepId, state: 'queued' })
      .update({ state: 'running', started_at: trx.raw('coalesce(started_at, now())'), updated_at: trx.fn.now() });
  });

  // Points are a pure function of their index, so those a crashed run already wrote stand as they are.
  const lastIndex = chunk.first_index + chunk.point_count - 1;
  const written = new Set(
    await knex('sweep_points')
      .where({ sweep_id: sweepId })
      .whereBetween('point_index', [chunk.first_index, lastIndex])
      .pluck<number[]>('point_index'),
  );
  const todo: number[] = [];
  for (let index = chunk.first_index; index <= lastIndex; index++) if (!written.has(index)) todo.push(index);

  let computed = 0;
  let failed = 0;
  const batchPoints = BATCH_POINTS[level];
  // The next batch is computed while the last one is written, so the point thread is not idle during
  // the database round trips. Its promise is marked handled at once: a fault while a write is awaited is
  // raised where the batch is awaited, not as an unhandled rejection that would end the process.
  const computeBatch = (first: number) => {
    const batch = compute({ sweepId, scenario, axes, level, indices: todo.slice(first, first + batchPoints) });
    batch.catch(() => undefined);
    return batch;
  };
  let pending = todo.length > 0 ? computeBatch(0) : undefined;
  for (let first = 0; pending !== undefined; first += batchPoints) {
    const rows = await pending;
    pending = first + batchPoints < todo.length ? computeBatch(first + batchPoints) : undefined;
    if ((await writeBatch(knex, sweepId, rows)) === 'stopped') {
      // The batch in flight is not wanted; waiting for it lets its thread finish before the job ends.
      await pending?.catch(() => undefined);
      const state = (await knex('sweeps').where({ id: sweepId }).first<{ state: string } | undefined>('state'))?.state ?? 'missing';
      deps.logger?.debug({ sweepId, chunkIndex, computed }, 'sweep stopped; chunk left unfinished');
      return { sweepId, chunkIndex, computed, failed, sweepState: state, skipped: 'sweep-stopped' };
    }
    computed += rows.length;
    failed += rows.filter((row) => row.status === 'failed').length;
  }

  const sweepState = await finishChunk(knex, sweepId, chunkIndex);
  deps.logger?.debug({ sweepId, chunkIndex, computed, failed, sweepState }, 'sweep chunk done');
  return { sweepId, chunkIndex, computed, failed, sweepState };
}

/** After a chunk has used up its retries, the sweep cannot finish: say so rather than leave it running. */
export async function markSweepFailed(knex: Knex, sweepId: string): Promise<void> {
  // Points it computed stay charged; the reservation of the rest goes back to the workspace.
  await knex('sweeps')
    .where({ id: sweepId })
    .whereIn('state', ['queued', 'running'])
    .update({ state: 'failed', reserved_units: 0, finished_at: knex.fn.now(), updated_at: knex.fn.now() });
}
