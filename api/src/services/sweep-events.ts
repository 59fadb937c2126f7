import { setTimeout as sleep } from 'node:timers/promises';
import type { Knex } from 'knex';
import { AppError } from '../errors/index.ts';
import type { SweepState } from '../models/index.ts';
import { StreamReply } from '../routes/route-def.ts';
import type { SweepProgressEvent, SweepStateEvent } from '../schemas/sweep-results.ts';
import type { AuthContext } from './auth.ts';

export interface SweepEventOptions {
  /** How often the sweep row is read; progress goes out at most this often. */
  pollMs: number;
  /** A comment line after this long without an event, so proxies and the browser keep the stream open. */
  heartbeatMs: number;
  /** The points-per-second rate is taken over the readings of this last stretch. */
  rateWindowMs: number;
  /** Streams one member may hold open at once in this process (each browser tab showing a sweep holds one). */
  maxStreamsPerMember: number;
}

export const SWEEP_EVENT_DEFAULTS: SweepEventOptions = Object.freeze({
  pollMs: 1000,
  heartbeatMs: 15_000,
  rateWindowMs: 10_000,
  maxStreamsPerMember: 4,
});

const TERMINAL: ReadonlySet<SweepState> = new Set(['done', 'failed', 'cancelled']);

/** How long a browser waits before opening a dropped stream again (the SSE `retry` field). */
const RETRY_MS = 3000;

interface Reading {
  state: SweepState;
  pointCount: number;
  pointsDone: number;
  pointsFailed: number;
  /** The database's clock, so readings and the rate's first sample share one clock. */
  atMs: number;
}

interface Sample {
  atMs: number;
  done: number;
}

/**
 * Open streams per member. Kept per app (the deps object), so two apps in one process do not share
 * counts; a released slot is released once, whichever of the stream's end or the client's leaving comes first.
 */
const openStreams = new WeakMap<object, Map<string, number>>();

function takeSlot(owner: object, userId: string, max: number): () => void {
  let counts = openStreams.get(owner);
  if (!counts) {
    counts = new Map();
    openStreams.set(owner, counts);
  }
  const held = counts.get(userId) ?? 0;
  if (held >= max) {
    throw new AppError(
      429,
      'too_many_streams',
      `You already follow ${held} sweeps live, the most one member may at once. Close a sweep's page in another tab and try again.`,
    );
  }
  counts.set(userId, held + 1);
  let released = false;
  return () => {
    if (released) return;
    released = true;
    const now = counts.get(userId) ?? 1;
    if (now <= 1) counts.delete(userId);
    else counts.set(userId, now - 1);
  };
}

/** One primary-key read; the connection goes back to the pool as soon as it answers. */
async function readSweep(knex: Knex, workspaceId: string, id: string): Promise<Reading | undefined> {
  const row = await knex('sweeps')
    .where({ id, workspace_id: workspaceId })
    .first<{ state: SweepState; point_count: number; points_done: number; points_failed: number; at_ms: string } | undefined>(
      'state',
      'point_count',
      'points_done',
      'points_failed',
      knex.raw('(extract(epoch from clock_timestamp()) * 1000)::float8 as at_ms'),
    );
  if (!row) return undefined;
  return { state: row.state, pointCount: row.point_count, pointsDone: row.points_done, pointsFailed: row.points_failed, atMs: Number(row.at_ms) };
}

/**
 * The rate's first sample, for a stream opened on a sweep already running: how many points were
 * written in the last window (or since the sweep started, when later). Read once per stream.
 */
async function firstSample(knex: Knex, id: string, reading: Reading, windowMs: number): Promise<Sample | undefined> {
  if (reading.state !== 'running') return undefined;
  const row = await knex('sweep_points')
    .join('sweeps', 'sweeps.id', 'sweep_points.sweep_id')
    .where('sweep_points.sweep_id', id)
    .first<{ recent: string; since_ms: string | null } | undefined>(
      knex.raw("count(*) filter (where sweep_points.updated_at >= greatest(clock_timestamp() - ?::interval, sweeps.started_at)) as recent", [`${windowMs} milliseconds`]),
      knex.raw("(extract(epoch from greatest(clock_timestamp() - ?::interval, max(sweeps.started_at))) * 1000)::float8 as since_ms", [`${windowMs} milliseconds`]),
    );
  if (!row || row.since_ms === null) return undefined;
  return { atMs: Number(row.since_ms), done: reading.pointsDone - Number(row.recent) };
}

/** Points per second over the samples kept, null until they span some time. */
function rateOf(samples: readonly Sample[]): number | null {
  const first = samples[0];
  const last = samples[samples.length - 1];
  if (!first || !last || last.atMs - first.atMs < 1) return null;
  return Math.max(0, ((last.done - first.done) * 1000) / (last.atMs - first.atMs));
}

export function progressOf(reading: Reading, rate: number | null): SweepProgressEvent {
  const left = reading.pointCount - reading.pointsDone;
  let secondsLeft: number | null = null;
  if (reading.state === 'done') secondsLeft = 0;
  else if (!TERMINAL.has(reading.state) && rate !== null && rate > 0) secondsLeft = Math.round((left / rate) * 10) / 10;
  return {
    state: reading.state,
    pointCount: reading.pointCount,
    pointsDone: reading.pointsDone,
    pointsFailed: reading.pointsFailed,
    pointsPerSecond: rate === null ? null : Math.round(rate * 100) / 100,
    secondsLeft,
  };
}

/**
 * A sweep's progress as server-sent events: `progress` at once and then at most once a poll while
 * anything changes, `state` on every change of state (and first, with `previous: null`), a comment as
 * heartbeat, and the stream ends after a final state. The sweep row is polled (one primary-key read a
 * second, no connection held in between) rather than followed with LISTEN/NOTIFY, which would need a
 * connection held outside the pool and a trigger on a table the workers write, and would still need
 * this read after every reconnect. Stops when the client leaves.
 */
export async function streamSweepEvents(
  deps: { knex: Knex },
  auth: Pick<AuthContext, 'workspaceId' | 'userId'>,
  id: string,
  signal: AbortSignal,
  options: SweepEventOptions = SWEEP_EVENT_DEFAULTS,
): Promise<StreamReply> {
  const { knex } = deps;
  const first = await readSweep(knex, auth.workspaceId, id);
  if (!first) throw AppError.notFound('Sweep');
  const release = takeSlot(deps, auth.userId, options.maxStreamsPerMember);
  signal.addEventListener('abort', release, { once: true });
  if (signal.aborted) release();

  let eventId = 0;
  const event = (type: 'progress' | 'state', data: SweepProgressEvent | SweepStateEvent): string =>
    `id: ${++eventId}\nevent: ${type}\ndata: ${JSON.stringify(data)}\n\n`;

  async function* events(): AsyncGenerator<string> {
    try {
      const samples: Sample[] = [];
      const seed = await firstSample(knex, id, first!, options.rateWindowMs);
      if (seed) samples.push(seed);
      samples.push({ atMs: first!.atMs, done: first!.pointsDone });
      let last = first!;
      yield `retry: ${RETRY_MS}\n` + event('state', { state: last.state, previous: null }) + event('progress', progressOf(last, rateOf(samples)));
      let quietSince = Date.now();

      while (!TERMINAL.has(last.state)) {
        try {
          await sleep(options.pollMs, undefined, { signal });
        } catch {
          return;
        }
        const now = await readSweep(knex, auth.workspaceId, id);
        if (!now) {
          // Deleted with its scenario or workspace while followed: nothing more will happen to it.
          yield ': the sweep is gone\n\n';
          return;
        }
        samples.push({ atMs: now.atMs, done: now.pointsDone });
        while (samples.length > 2 && (samples[1]?.atMs ?? now.atMs) <= now.atMs - options.rateWindowMs) samples.shift();

        let out = '';
        if (now.state !== last.state) out += event('state', { state: now.state, previous: last.state });
        const changed = now.state !== last.state || now.pointsDone !== last.pointsDone || now.pointsFailed !== last.pointsFailed;
        if (changed) out += event('progress', progressOf(now, rateOf(samples)));
        last = now;
        if (out !== '') {
          quietSince = Date.now();
          yield out;
        } else if (Date.now() - quietSince >= options.heartbeatMs) {
          quietSince = Date.now();
          yield ': still running\n\n';
        }
      }
    } finally {
      release();
    }
  }

  return new StreamReply({ contentType: 'text/event-stream; charset=utf-8', source: events() });
}
