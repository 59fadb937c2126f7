import type { Knex } from 'knex';
import { AuditEntry, type AuditAction, type AuditChange } from '../models/index.ts';

/** More changed fields than this in one change are summed up rather than listed. */
const MAX_CHANGES = 200;

function isPlainObject(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value) && !(value instanceof Date);
}

function same(a: unknown, b: unknown): boolean {
  return JSON.stringify(a) === JSON.stringify(b);
}

/** Leaf by leaf, with dotted paths as the API names fields (`data.springs.0.seatForceN`). */
export function diffChanges(before: Record<string, unknown>, after: Record<string, unknown>): Record<string, AuditChange> {
  const changes: Record<string, AuditChange> = {};
  let count = 0;
  let skipped = 0;
  const walk = (a: unknown, b: unknown, path: string) => {
    if (same(a, b)) return;
    const bothObjects = isPlainObject(a) && isPlainObject(b);
    const bothArrays = Array.isArray(a) && Array.isArray(b);
    if (bothObjects || bothArrays) {
      const keys = new Set([...Object.keys(a as object), ...Object.keys(b as object)]);
      for (const key of keys) walk((a as Record<string, unknown>)[key], (b as Record<string, unknown>)[key], path ? `${path}.${key}` : key);
      return;
    }
    if (count >= MAX_CHANGES) {
      skipped += 1;
      return;
    }
    count += 1;
    changes[path] = { ...(a === undefined ? {} : { from: a }), ...(b === undefined ? {} : { to: b }) };
  };
  walk(before, after, '');
  if (skipped > 0) changes['…'] = { to: `${skipped} more changed fields` };
  return changes;
}

/** The whole record as created (`to`) or as deleted (`from`), field by top-level field. */
export function snapshotChanges(record: Record<string, unknown>, as: 'from' | 'to'): Record<string, AuditChange> {
  return Object.fromEntries(Object.entries(record).map(([key, value]) => [key, { [as]: value }]));
}

export interface AuditInput {
  workspaceId: string;
  actorId: string | null;
  action: AuditAction;
  entityType: string;
  entityId: string | null;
  changes: Record<string, AuditChange>;
}

/** Call inside the transaction of the change, so the two are written together or not at all. */
export async function recordAudit(trx: Knex.Transaction, entry: AuditInput): Promise<void> {
  await AuditEntry.query(trx).insert(entry);
}
