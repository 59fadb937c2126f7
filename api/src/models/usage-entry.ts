import { BaseModel } from './base-model.ts';

export const USAGE_KINDS = ['pull', 'sweep', 'purchase', 'grant'] as const;
export type UsageKind = (typeof USAGE_KINDS)[number];

/** One line of the usage ledger: compute spent (pull, sweep) or added (purchase, grant), always positive. */
export class UsageEntry extends BaseModel {
  static override tableName = 'usage_ledger';

  id!: string;
  workspaceId!: string;
  userId!: string | null;
  kind!: UsageKind;
  computeUnits!: number;
  /** First day of the UTC month the entry counts in, as YYYY-MM-DD. */
  periodMonth!: string;
  scenarioId!: string | null;
  sweepId!: string | null;
  externalRef!: string | null;
  note!: string;

  override $parseDatabaseJson(json: Record<string, unknown>): Record<string, unknown> {
    const parsed = super.$parseDatabaseJson(json);
    // bigint and date come back from pg as a string and a Date; units stay far below 2^53.
    if (typeof parsed.computeUnits === 'string') parsed.computeUnits = Number(parsed.computeUnits);
    if (parsed.periodMonth instanceof Date) parsed.periodMonth = isoDay(parsed.periodMonth);
    return parsed;
  }
}

/** The calendar day of a date as pg hands it over (local midnight of that day), YYYY-MM-DD. */
function isoDay(date: Date): string {
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${date.getFullYear()}-${pad(date.getMonth() + 1)}-${pad(date.getDate())}`;
}
