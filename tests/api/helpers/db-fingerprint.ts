import type { Knex } from 'knex';

/**
 * A digest of every row of every application table: equal fingerprints before and after a request mean
 * the request wrote nothing (no row added, removed or changed anywhere).
 */
export async function dbFingerprint(knex: Knex): Promise<Record<string, string>> {
  const tables = await knex('pg_tables')
    .where({ schemaname: 'public' })
    .whereNot('tablename', 'like', 'knex_migrations%')
    .orderBy('tablename')
    .pluck<string[]>('tablename');
  const digest: Record<string, string> = {};
  for (const table of tables) {
    const row = await knex
      .select(knex.raw(`count(*)::text || ':' || coalesce(md5(string_agg(t::text, ',' order by t::text)), '') as d`))
      .from({ t: table })
      .first<{ d: string }>();
    digest[table] = row?.d ?? '';
  }
  return digest;
}
