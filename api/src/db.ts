import knexPkg, { type Knex } from 'knex';

/**
 * A plain knex (no identifier mappers): column names stay snake_case for raw queries here, in the
 * worker and in scripts, and the Objection models map them to camelCase themselves. Models are
 * never bound globally (Model.knex): every query is given its knex, so two apps in one process
 * (tests, scripts) cannot run on each other's pool.
 */
export function createKnex(databaseUrl: string): Knex {
  return knexPkg({
    client: 'pg',
    connection: databaseUrl,
    pool: { min: 0, max: 10 },
    acquireConnectionTimeout: 10_000,
  });
}
