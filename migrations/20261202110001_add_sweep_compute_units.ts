import type { Knex } from 'knex';

/**
 * A sweep's compute reservation. `compute_units` is the estimate taken from the quota when the sweep was
 * created; `reserved_units` is the part not yet spent or released (the worker lowers it as points finish,
 * and it is 0 once the sweep is done, failed or cancelled); `usage_month` is the UTC month (first day)
 * that the reservation and every charge of the sweep count in. Sweeps from before this have 0 and null.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('sweeps', (table) => {
    table.integer('compute_units').notNullable().defaultTo(0);
    table.integer('reserved_units').notNullable().defaultTo(0);
    table.date('usage_month').nullable();
    table.check('compute_units >= 0 and reserved_units >= 0 and reserved_units <= compute_units', [], 'sweeps_compute_units_check');
    table.check("usage_month is null or usage_month = date_trunc('month', usage_month)", [], 'sweeps_usage_month_check');
  });
  // What is reserved is summed on every sweep created and every pull charged: only open reservations.
  await knex.raw(
    'create index sweeps_open_reservations_index on sweeps (workspace_id, usage_month, created_by) where reserved_units > 0',
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('drop index if exists sweeps_open_reservations_index');
  await knex.schema.alterTable('sweeps', (table) => {
    table.dropChecks(['sweeps_compute_units_check', 'sweeps_usage_month_check']);
    table.dropColumn('usage_month');
    table.dropColumn('reserved_units');
    table.dropColumn('compute_units');
  });
}
