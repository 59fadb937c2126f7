import {
  coordinatesOf,
  evaluateStaticPoint,
  parseScenario,
  pointAt,
  type ResolvedAxis,
  type Scenario,
} from '@crackpoint/sim-core';
import { UnrecoverableError } from 'bullmq';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { z } from 'zod';
import { sweepChunkJobSchema } from '../queues.ts';

export interface SweepChunkDeps {
  /** A plain knex (real snake_case column names). */
  knex: Knex;
  logger?: Logger;
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

const UPSERT_BATCH = 500;
const ERROR_TEXT_MAX = 500;

const axesSchema = z
  .array(z.object({ path: z.string().min(1), values: z.array(z.number()).min(1) }))
  .min(1)
  .max(3);

interface SweepRow {
  id: string;
  state: string;
  scenario_snapshot: unknown;
  axes: unknown;
}

interface ChunkRow {
  first_index: number;
  point_count: number;
  state: string;
}

interface PointRow {
  sweep_id: string;
  point_index: number;
  axis0: number | null;
  axis1: number | null;
  axis2: number | null;
  status: 'ok' | 'never-opens' | 'open-at-zero-boost' | 'failed';
  crack_boost_pa: number | null;
  full_open_boost_pa: number | null;
  error: string | null;
  result: null;
}

function finiteOrNull(value: number | null): number | null {
  return value !== null && Number.isFinite(value) ? value : null;
}

/** One point; a point the model cannot evaluate is recorded with its reason, never thrown. */
export function computePointRow(sweepId: string, scenario: Scenario, axes: readonly ResolvedAxis[], index: number): PointRow {
  const coords = coordinatesOf(axes, index);
  const axisValue = (a: number): number | null => {
    const axis = axes[a];
    const at = coords[a];
    return axis && at !== undefined ? (axis.values[at] ?? null) : null;
  };
  const row: PointRow = {
    sweep_id: sweepId,
    point_index: index,
    axis0: axisValue(0),
    axis1: axisValue(1),
    axis2: axisValue(2),
    status: 'failed',
    crack_boost_pa: null,
    full_open_boost_pa: null,
    error: null,
    result: null,
  };
  try {
    const point = pointAt(scenario, axes, index);
    const result = evaluateStaticPoint(point.scenario);
    const crack = finiteOrNull(result.crackBoostPa);
    const fullOpen = finiteOrNull(result.fullOpenBoostPa);
    if (crack !== result.crackBoostPa || fullOpen !== result.fullOpenBoostPa) {
      return { ...row, error: 'the model gave a non-finite boost' };
    }
    return { ...row, status: result.status, crack_boost_pa: crack, full_open_boost_pa: fullOpen };
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    return { ...row, error: message.slice(0, ERROR_TEXT_MAX) || 'the point could not be evaluated' };
  }
}

/**
 * Counters are recounted from sweep_points rather than incremented, so a chunk that runs twice
 * (a retry, a duplicate delivery) cannot count its points twice. The sweep row is locked first so
 * two chunks finishing together are serialised and the last one sees every other chunk done.
 */
async function finishChunk(knex: Knex, sweepId: string, chunkIndex: number): Promise<string> {
  return knex.transaction(async (trx) => {
    const sweep = await trx('sweeps').where({ id: sweepId }).forUpdate().first<{ state: string } | undefined>('state');
    if (!sweep) return 'missing';
    await trx('sweep_chunks')
      .where({ sweep_id: sweepId, chunk_index: chunkIndex })
      .update({ state: 'done', updated_at: trx.fn.now() });
    const counts = await trx('sweep_points')
      .where({ sweep_id: sweepId })
      .first<{ done: string; failed: string }>(
        trx.raw('count(*) as done'),
        trx.raw("count(*) filter (where status = 'failed') as failed"),
      );
    const open = await trx('sweep_chunks')
      .where({ sweep_id: sweepId })
      .whereNot({ state: 'done' })
      .first<{ n: string }>(trx.raw('count(*) as n'));
    const allDone = Number(open?.n ?? 0) === 0;
    // A sweep already failed or cancelled keeps that state; its counters still tell what got done.
    const stopped = sweep.state === 'failed' || sweep.state === 'cancelled';
    const state = stopped ? sweep.state : allDone ? 'done' : 'running';
    await trx('sweeps')
      .where({ id: sweepId })
      .update({
        points_done: Number(counts?.done ?? 0),
        points_failed: Number(counts?.failed ?? 0),
        state,
        started_at: trx.raw('coalesce(started_at, now())'),
        finished_at: allDone || stopped ? trx.raw('coalesce(finished_at, now())') : null,
        updated_at: trx.fn.now(),
      });
    return state;
  });
}

/** Computes one chunk of a sweep and records it; safe to run any number of times. */
export async function processSweepChunk(deps: SweepChunkDeps, payload: unknown): Promise<SweepChunkOutcome> {
  const job = sweepChunkJobSchema.safeParse(payload);
  if (!job.success) throw new UnrecoverableError(`sweep chunk payload is not valid: ${job.error.issues[0]?.message ?? ''}`);
  const { sweepId, chunkIndex } = job.data;
  const { knex } = deps;

  const sweep = await knex('sweeps').where({ id: sweepId }).first<SweepRow | undefined>('id', 'state', 'scenario_snapshot', 'axes');
  // Deleted with its scenario or workspace (the cascade took the chunks too): nothing left to do.
  if (!sweep) return { sweepId, chunkIndex, computed: 0, failed: 0, sweepState: 'missing', skipped: 'sweep-missing' };
  if (sweep.state === 'cancelled' || sweep.state === 'failed') {
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
  const scenario = parsedScenario.scenario;
  const axes = parsedAxes.data;

  await knex.transaction(async (trx) => {
    await trx('sweep_chunks')
      .where({ sweep_id: sweepId, chunk_index: chunkIndex })
      .update({ state: 'running', attempts: trx.raw('attempts + 1'), updated_at: trx.fn.now() });
    await trx('sweeps')
      .where({ id: sweepId, state: 'queued' })
      .update({ state: 'running', started_at: trx.raw('coalesce(started_at, now())'), updated_at: trx.fn.now() });
  });

  const rows: PointRow[] = [];
  for (let index = chunk.first_index; index < chunk.first_index + chunk.point_count; index++) {
    rows.push(computePointRow(sweepId, scenario, axes, index));
  }

  for (let first = 0; first < rows.length; first += UPSERT_BATCH) {
    await knex('sweep_points')
      .insert(rows.slice(first, first + UPSERT_BATCH))
      .onConflict(['sweep_id', 'point_index'])
      .merge(['axis0', 'axis1', 'axis2', 'status', 'crack_boost_pa', 'full_open_boost_pa', 'error', 'result', 'updated_at']);
  }

  const sweepState = await finishChunk(knex, sweepId, chunkIndex);
  const failed = rows.filter((row) => row.status === 'failed').length;
  deps.logger?.debug({ sweepId, chunkIndex, computed: rows.length, failed, sweepState }, 'sweep chunk done');
  return { sweepId, chunkIndex, computed: rows.length, failed, sweepState };
}

/** After a chunk has used up its retries, the sweep cannot finish: say so rather than leave it running. */
export async function markSweepFailed(knex: Knex, sweepId: string): Promise<void> {
  await knex('sweeps')
    .where({ id: sweepId })
    .whereIn('state', ['queued', 'running'])
    .update({ state: 'failed', finished_at: knex.fn.now(), updated_at: knex.fn.now() });
}
