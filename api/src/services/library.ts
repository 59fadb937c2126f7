import type { Knex } from 'knex';
import { raw, UniqueViolationError } from 'objection';
import { AppError } from '../errors/index.ts';
import type { LibraryItem } from '../models/index.ts';
import type { LibraryCreateBody, LibraryKind, LibraryListQuery, LibraryRow, LibraryUpdateBody } from '../schemas/library.ts';
import { diffChanges, recordAudit, snapshotChanges } from './audit.ts';
import type { AuthContext } from './auth.ts';

const SORT_COLUMNS: Record<string, string> = { name: 'lower(name)', createdAt: 'created_at', updatedAt: 'updated_at' };

export function presentLibraryItem(item: LibraryItem): LibraryRow {
  return {
    id: item.id,
    name: item.name,
    notes: item.notes,
    data: item.data,
    version: item.version,
    archived: item.archivedAt !== null,
    archivedAt: item.archivedAt ? item.archivedAt.toISOString() : null,
    createdBy: item.createdBy,
    updatedBy: item.updatedBy,
    createdAt: item.createdAt.toISOString(),
    updatedAt: item.updatedAt.toISOString(),
  };
}

/** `%` and `_` typed by the user are letters, not wildcards. */
export function likePattern(text: string): string {
  return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

function nameTaken(kind: LibraryKind): AppError {
  return new AppError(409, 'name_taken', `Another ${kind.singular} in the library already has this name.`, {
    name: `is already the name of another ${kind.singular}`,
  });
}

function rethrowNameTaken(kind: LibraryKind) {
  return (error: unknown): never => {
    throw error instanceof UniqueViolationError ? nameTaken(kind) : error;
  };
}

export async function listLibraryItems(
  knex: Knex,
  kind: LibraryKind,
  workspaceId: string,
  query: LibraryListQuery,
): Promise<{ items: LibraryRow[]; total: number }> {
  const base = kind.model.query(knex).modify('inWorkspace', workspaceId);
  if (query.q) base.whereRaw("name ilike ? escape '\\'", [likePattern(query.q)]);
  if (query.archived === 'false') base.whereNull('archived_at');
  if (query.archived === 'true') base.whereNotNull('archived_at');
  if (query.kind && kind.kindFilter) base.whereRaw('data->>? = ?', [kind.kindFilter.field, query.kind]);

  const direction = query.order === 'desc' ? 'desc' : 'asc';
  const page = base.clone();
  const column = SORT_COLUMNS[query.sort];
  if (column) page.orderByRaw(`${column} ${direction}`);
  // A numeric field of the part; parts without it (a bench-rated spring has no seat force) sort last.
  else page.orderByRaw(`(data->>?)::double precision ${direction} nulls last`, [query.sort]);
  page.orderBy('id').limit(query.limit).offset(query.offset);

  const [rows, total] = await Promise.all([page, base.clone().resultSize()]);
  return { items: rows.map(presentLibraryItem), total };
}

/** Another workspace's part is "not found", exactly like a missing one. */
export async function findLibraryItem(knex: Knex, kind: LibraryKind, workspaceId: string, id: string): Promise<LibraryItem> {
  const item = await kind.model.query(knex).modify('inWorkspace', workspaceId).findById(id);
  if (!item) throw AppError.notFound(kind.title);
  return item;
}

export async function getLibraryItem(knex: Knex, kind: LibraryKind, workspaceId: string, id: string): Promise<LibraryRow> {
  return presentLibraryItem(await findLibraryItem(knex, kind, workspaceId, id));
}

export async function createLibraryItem(knex: Knex, kind: LibraryKind, auth: AuthContext, input: LibraryCreateBody): Promise<LibraryRow> {
  const item = await knex.transaction(async (trx) => {
    const created = await kind.model
      .query(trx)
      .insertAndFetch({
        workspaceId: auth.workspaceId,
        name: input.name,
        notes: input.notes,
        data: input.data,
        createdBy: auth.userId,
        updatedBy: auth.userId,
      })
      .catch(rethrowNameTaken(kind));
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'create',
      entityType: kind.singular,
      entityId: created.id,
      changes: snapshotChanges({ name: created.name, notes: created.notes, data: created.data }, 'to'),
    });
    return created;
  });
  return presentLibraryItem(item);
}

export async function updateLibraryItem(
  knex: Knex,
  kind: LibraryKind,
  auth: AuthContext,
  id: string,
  input: LibraryUpdateBody,
): Promise<LibraryRow> {
  const item = await knex.transaction(async (trx) => {
    const current = await findLibraryItem(trx, kind, auth.workspaceId, id);
    const archivedAt =
      input.archived === undefined ? undefined : input.archived ? (current.archivedAt ?? new Date()) : null;
    // The version check and the increment are one statement, so two editors holding the same version
    // cannot both win.
    const [updated] = await kind.model
      .query(trx)
      .modify('inWorkspace', auth.workspaceId)
      .where('id', id)
      .where('version', input.version)
      .patch({
        ...(input.name === undefined ? {} : { name: input.name }),
        ...(input.notes === undefined ? {} : { notes: input.notes }),
        ...(input.data === undefined ? {} : { data: input.data }),
        ...(archivedAt === undefined ? {} : { archivedAt }),
        updatedBy: auth.userId,
        version: raw('version + 1'),
      })
      .returning('*')
      .catch(rethrowNameTaken(kind));
    if (!updated) {
      throw AppError.conflict(
        'version_conflict',
        `This ${kind.singular} was changed by someone else since you opened it. Reload it and apply your change again.`,
      );
    }
    const before = { name: current.name, notes: current.notes, data: current.data, archived: current.archivedAt !== null };
    const after = { name: updated.name, notes: updated.notes, data: updated.data, archived: updated.archivedAt !== null };
    const archiving = before.archived !== after.archived;
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: archiving && Object.keys(diffChanges(before, after)).length === 1 ? (after.archived ? 'archive' : 'unarchive') : 'update',
      entityType: kind.singular,
      entityId: id,
      changes: diffChanges(before, after),
    });
    return updated;
  });
  return presentLibraryItem(item);
}

/** The scenarios built from a part, by name, for the 409 that refuses to delete it. */
async function scenariosUsing(knex: Knex, kind: LibraryKind, workspaceId: string, id: string): Promise<{ id: string; name: string }[]> {
  const query = knex('scenarios').where('scenarios.workspace_id', workspaceId).select('scenarios.id', 'scenarios.name').orderBy('scenarios.name');
  if (kind.scenarioColumn) query.where(`scenarios.${kind.scenarioColumn}`, id);
  else query.whereExists(knex('scenario_springs').whereRaw('scenario_springs.scenario_id = scenarios.id').where('scenario_springs.spring_id', id));
  return query;
}

const NAMES_SHOWN = 5;

export async function deleteLibraryItem(knex: Knex, kind: LibraryKind, auth: AuthContext, id: string): Promise<void> {
  await knex.transaction(async (trx) => {
    const current = await findLibraryItem(trx, kind, auth.workspaceId, id);
    // Lock the part so no scenario can be built from it between the check and the delete; the
    // foreign keys on scenarios refuse that case anyway, this makes the answer a clear 409.
    await trx(kind.key).where({ id }).forUpdate().first('id');
    const users = await scenariosUsing(trx, kind, auth.workspaceId, id);
    if (users.length > 0) {
      const names = users.slice(0, NAMES_SHOWN).map((s) => `"${s.name}"`).join(', ');
      const more = users.length > NAMES_SHOWN ? ` and ${users.length - NAMES_SHOWN} more` : '';
      throw AppError.conflict(
        'in_use',
        `This ${kind.singular} is used by ${users.length === 1 ? 'the scenario' : `${users.length} scenarios:`} ${names}${more}. ` +
          `Archive it instead, or build those scenarios from another ${kind.singular} first.`,
      );
    }
    await kind.model.query(trx).deleteById(id);
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'delete',
      entityType: kind.singular,
      entityId: id,
      changes: snapshotChanges({ name: current.name, notes: current.notes, data: current.data }, 'from'),
    });
  });
}
