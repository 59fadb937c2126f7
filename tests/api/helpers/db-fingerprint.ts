import type { Knex } from 'knex';

/**
 * A digest of every row of every application table, in one round trip: equal fingerprints before and
 * after a request mean the request wrote nothing (no row added, removed or changed anywhere).
 */
export async function dbFingerprint(knex: Knex): Promise<Record<string, string>> {
  const tables = await knex('pg_tables')
    .where({ schemaname: 'public' })
    .whereNot('tablename', 'like', 'knex_migrations%')
    .orderBy('tablename')
    .pluck<string[]>('tablename');
  const parts = tables.map(
    (table) =>
      knex
        .raw(`select ? as name, count(*)::text || ':' || coalesce(md5(string_agg(t::text, ',' order by t::text)), '') as digest from ?? t`, [table, table])
        .toQuery(),
  );
  const { rows } = (await knex.raw(parts.join(' union all '))) as { rows: { name: string; digest: string }[] };
  return Object.fromEntries(rows.map((row) => [row.name, row.digest]));
}
