import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import type { UsageQuery, UsageView } from '../schemas/usage.ts';
import type { AuthContext } from './auth.ts';
import { readMonthUnits, usableBy, usageMonthOf } from './compute-units.ts';
import { listMembers } from './quotas.ts';

/** "2026-12-01" → "2026-12" and back. */
const toYearMonth = (month: string) => month.slice(0, 7);
const toFirstDay = (yearMonth: string) => `${yearMonth}-01`;

/** Every month from `first` to `last` (both YYYY-MM), newest first. */
function monthsBetween(first: string, last: string): string[] {
  const months: string[] = [];
  let [year, month] = last.split('-').map(Number) as [number, number];
  const stop = first < last ? first : last;
  for (;;) {
    const label = `${year}-${String(month).padStart(2, '0')}`;
    months.push(label);
    if (label <= stop) break;
    month -= 1;
    if (month === 0) {
      month = 12;
      year -= 1;
    }
  }
  return months;
}

/**
 * A month's usage (the current UTC month by default): the caller's own for every role; for admins
 * also each member's and the workspace's totals.
 */
export async function getUsage(
  deps: { knex: Knex; config: Pick<Config, 'defaultWorkspaceMonthlyUnits'> },
  auth: AuthContext,
  query: UsageQuery,
  now: Date = new Date(),
): Promise<UsageView> {
  const current = toYearMonth(usageMonthOf(now));
  const yearMonth = query.month ?? current;
  const [units, first] = await Promise.all([
    readMonthUnits(deps.knex, deps.config, auth.workspaceId, toFirstDay(yearMonth)),
    deps.knex('usage_ledger')
      .where({ workspace_id: auth.workspaceId })
      .first<{ first: string | null }>(deps.knex.raw("to_char(min(period_month), 'YYYY-MM') as first")),
  ]);
  const newest = yearMonth > current ? yearMonth : current;
  const months = monthsBetween(first?.first ?? current, newest);

  const mine = units.members.get(auth.userId);
  const own = {
    userId: auth.userId,
    quota: mine?.quota ?? null,
    spent: mine?.spent ?? 0,
    reserved: mine?.reserved ?? 0,
    remaining: usableBy(units, auth.userId).usable,
  };
  if (auth.role !== 'admin') return { month: yearMonth, months, own, workspace: null, members: null };

  const { quota, quotaIsDefault, purchased, granted, spent, reserved, remaining } = units.workspace;
  const members = (await listMembers(deps.knex, auth.workspaceId)).map((m) => {
    const u = units.members.get(m.id);
    return {
      userId: m.id,
      displayName: m.display_name,
      email: m.email,
      role: m.role,
      quota: u?.quota ?? null,
      granted: u?.granted ?? 0,
      spent: u?.spent ?? 0,
      reserved: u?.reserved ?? 0,
      remaining: u?.remaining ?? null,
    };
  });
  return { month: yearMonth, months, own, workspace: { quota, quotaIsDefault, purchased, granted, spent, reserved, remaining }, members };
}
