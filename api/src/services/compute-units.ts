import { sweepComputeUnits, type SweepLevel } from '@crackpoint/worker';
import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import type { AuthContext } from './auth.ts';

/**
 * Compute units: what things cost, and how much of a month's allowance is left.
 *
 * The cost rule itself lives with the worker (`sweepComputeUnits` in @crackpoint/worker), which charges
 * sweeps as their points complete and cannot import the API; it is re-exported here so the API and the
 * worker price a sweep with one function.
 *
 * For a workspace and a UTC calendar month:
 * - available = the workspace's monthly quota (its own, or the configured default)
 *               + `purchase` entries of that month + `grant` entries of that month
 * - spent     = `pull` and `sweep` entries of that month (a sweep's charges count in the month it was created)
 * - reserved  = what queued and running sweeps created that month hold and have not yet spent or released
 * - remaining = available − spent − reserved, never shown below 0
 * A member with a quota of their own is also held to it: their available is that quota plus `grant`
 * entries made out to them; spent and reserved are theirs alone (sweeps they created, pulls they ran).
 * What a member can use is the smaller of their remaining and the workspace's.
 */
export { sweepComputeUnits, STATIC_POINTS_PER_UNIT, UNITS_PER_DYNAMIC_PULL } from '@crackpoint/worker';

/** A pull computed on the server: one dynamic pull. */
export const SERVER_PULL_UNITS = sweepComputeUnits('dynamic', 1);

const SPENDING_KINDS = new Set(['pull', 'sweep']);

/** The UTC calendar month of an instant, as its first day (YYYY-MM-DD), the ledger's `period_month`. */
export function usageMonthOf(at: Date): string {
  return `${at.getUTCFullYear()}-${String(at.getUTCMonth() + 1).padStart(2, '0')}-01`;
}

/** "2026-12-01" → "December 2026", for messages. */
export function monthName(month: string): string {
  const [year, mm] = month.split('-');
  const date = new Date(Date.UTC(Number(year), Number(mm) - 1, 1));
  return date.toLocaleString('en-GB', { month: 'long', year: 'numeric', timeZone: 'UTC' });
}

export interface WorkspaceUnits {
  quota: number;
  /** True when the workspace has no quota of its own and the configured default applies. */
  quotaIsDefault: boolean;
  purchased: number;
  granted: number;
  spent: number;
  reserved: number;
  remaining: number;
}

export interface MemberUnits {
  /** The member's own monthly limit; null when only the workspace's limits them. */
  quota: number | null;
  granted: number;
  spent: number;
  reserved: number;
  /** Left of the member's own limit; null when they have none. */
  remaining: number | null;
}

export interface MonthUnits {
  month: string;
  workspace: WorkspaceUnits;
  /** Members with a quota or any usage that month; anyone else has none of either. */
  members: Map<string, MemberUnits>;
}

interface UsageRow {
  src: 'ledger' | 'reserved';
  user_id: string | null;
  kind: string;
  units: string;
}

/**
 * The month's quotas, ledger and open reservations of a workspace. Ledger and reservations are read
 * in one statement, so they come from one snapshot: a chunk that moves units from reserved to spent
 * between two reads could otherwise make them look smaller than they are.
 */
export async function readMonthUnits(knex: Knex, config: Pick<Config, 'defaultWorkspaceMonthlyUnits'>, workspaceId: string, month: string): Promise<MonthUnits> {
  const [rows, quotas] = await Promise.all([
    knex
      .raw<{ rows: UsageRow[] }>(
        `select 'ledger' as src, user_id, kind, sum(compute_units) as units
           from usage_ledger
          where workspace_id = :workspaceId and period_month = :month
          group by user_id, kind
         union all
         select 'reserved' as src, created_by as user_id, 'reserved' as kind, sum(reserved_units) as units
           from sweeps
          where workspace_id = :workspaceId and usage_month = :month and reserved_units > 0 and state in ('queued', 'running')
          group by created_by`,
        { workspaceId, month },
      )
      .then((result) => result.rows),
    knex('quotas').where({ workspace_id: workspaceId }).select<{ user_id: string | null; monthly_compute_units: string }[]>('user_id', 'monthly_compute_units'),
  ]);

  const workspaceQuota = quotas.find((q) => q.user_id === null);
  const workspace: WorkspaceUnits = {
    quota: workspaceQuota ? Number(workspaceQuota.monthly_compute_units) : config.defaultWorkspaceMonthlyUnits,
    quotaIsDefault: !workspaceQuota,
    purchased: 0,
    granted: 0,
    spent: 0,
    reserved: 0,
    remaining: 0,
  };
  const members = new Map<string, MemberUnits>();
  const member = (userId: string): MemberUnits => {
    let entry = members.get(userId);
    if (!entry) {
      entry = { quota: null, granted: 0, spent: 0, reserved: 0, remaining: null };
      members.set(userId, entry);
    }
    return entry;
  };
  for (const quota of quotas) if (quota.user_id !== null) member(quota.user_id).quota = Number(quota.monthly_compute_units);

  for (const row of rows) {
    // bigint sums arrive as strings; units stay far below 2^53.
    const units = Number(row.units);
    const who = row.user_id === null ? undefined : member(row.user_id);
    if (row.src === 'reserved') {
      workspace.reserved += units;
      if (who) who.reserved += units;
    } else if (SPENDING_KINDS.has(row.kind)) {
      workspace.spent += units;
      if (who) who.spent += units;
    } else if (row.kind === 'purchase') {
      workspace.purchased += units;
    } else if (row.kind === 'grant') {
      workspace.granted += units;
      if (who) who.granted += units;
    }
  }

  workspace.remaining = Math.max(0, workspace.quota + workspace.purchased + workspace.granted - workspace.spent - workspace.reserved);
  for (const entry of members.values()) {
    entry.remaining = entry.quota === null ? null : Math.max(0, entry.quota + entry.granted - entry.spent - entry.reserved);
  }
  return { month, workspace, members };
}

/** What one member can still use: the smaller of their own remaining (if they have a quota) and the workspace's. */
export function usableBy(units: MonthUnits, userId: string): { member: number | null; workspace: number; usable: number } {
  const member = units.members.get(userId)?.remaining ?? null;
  const workspace = units.workspace.remaining;
  return { member, workspace, usable: member === null ? workspace : Math.min(member, workspace) };
}

function plural(units: number): string {
  return `${units.toLocaleString('en-GB')} compute unit${units === 1 ? '' : 's'}`;
}

/** 402 quota_exceeded, saying what is needed and what is left (the tighter of the two limits). */
export function assertUnitsAvailable(units: MonthUnits, userId: string, needed: number, what: string): void {
  const left = usableBy(units, userId);
  if (needed <= left.usable) return;
  const month = monthName(units.month);
  const memberIsTighter = left.member !== null && left.member < left.workspace;
  const where = memberIsTighter
    ? `you have ${plural(left.member ?? 0)} left of your own monthly limit for ${month}`
    : `the workspace has ${plural(left.workspace)} left for ${month}`;
  throw new AppError(402, 'quota_exceeded', `${what} needs ${plural(needed)}, but ${where}. Ask an admin for a larger quota, buy more compute or make it smaller.`);
}

/**
 * Serialises every check-and-take of a workspace's units until the transaction ends, so two requests
 * cannot both see the same units left and both take them. An advisory lock rather than a row lock:
 * it blocks nothing else that touches the workspace row.
 */
export async function lockWorkspaceUnits(trx: Knex.Transaction, workspaceId: string): Promise<void> {
  await trx.raw('select pg_advisory_xact_lock(hashtextextended(?, 0))', [`compute-units:${workspaceId}`]);
}

/** The units a sweep would reserve. */
export function estimateSweepUnits(level: SweepLevel, pointCount: number): number {
  return sweepComputeUnits(level, pointCount);
}

export interface ComputeCharge {
  entryId: string;
  units: number;
}

export interface ServerPullRef {
  scenarioId?: string | null;
  sweepId?: string | null;
  note?: string;
}

/**
 * Charges one server pull (1 unit) to the member and their workspace for the current UTC month, or
 * refuses with 402 when none is left. Checked and booked under the workspace's units lock, so
 * concurrent pulls cannot overspend. Call before computing; see `withServerPullCharge`.
 */
export async function chargeServerPull(
  deps: { knex: Knex; config: Pick<Config, 'defaultWorkspaceMonthlyUnits'> },
  auth: Pick<AuthContext, 'workspaceId' | 'userId'>,
  ref: ServerPullRef = {},
  now: Date = new Date(),
): Promise<ComputeCharge> {
  const month = usageMonthOf(now);
  return deps.knex.transaction(async (trx) => {
    await lockWorkspaceUnits(trx, auth.workspaceId);
    const units = await readMonthUnits(trx, deps.config, auth.workspaceId, month);
    assertUnitsAvailable(units, auth.userId, SERVER_PULL_UNITS, 'A pull');
    const [row] = await trx('usage_ledger')
      .insert({
        workspace_id: auth.workspaceId,
        user_id: auth.userId,
        kind: 'pull',
        compute_units: SERVER_PULL_UNITS,
        period_month: month,
        scenario_id: ref.scenarioId ?? null,
        sweep_id: ref.sweepId ?? null,
        note: ref.note ?? '',
      })
      .returning<{ id: string }[]>('id');
    if (!row) throw new Error('the pull charge was not written');
    return { entryId: row.id, units: SERVER_PULL_UNITS };
  });
}

/** Takes back a pull charge whose pull produced no result (refused, failed or timed out). */
export async function releaseServerPull(knex: Knex, charge: ComputeCharge): Promise<void> {
  await knex('usage_ledger').where({ id: charge.entryId, kind: 'pull' }).delete();
}

/**
 * Charges one server pull, runs it, and takes the charge back if it throws: a pull costs its unit only
 * when it produces a result. The sweep-results part runs a sweep point's pull through this too.
 */
export async function withServerPullCharge<T>(
  deps: { knex: Knex; config: Pick<Config, 'defaultWorkspaceMonthlyUnits'> },
  auth: Pick<AuthContext, 'workspaceId' | 'userId'>,
  ref: ServerPullRef,
  run: () => Promise<T>,
): Promise<T> {
  const charge = await chargeServerPull(deps, auth, ref);
  try {
    return await run();
  } catch (error) {
    await releaseServerPull(deps.knex, charge);
    throw error;
  }
}
