import type { Knex } from 'knex';

/** The columns of a datalog series besides time, each optional (a log need not record them). */
const OPTIONAL_SERIES = ['rpm', 'drive_pa', 'duty', 'supply_pa'] as const;

export async function up(knex: Knex): Promise<void> {
  // One row per datalog: its parsed series in SI (s; Pa gauge; duty 0–1), one typed array per quantity,
  // written with the upload in one transaction and replaced whole when the mapping changes.
  await knex.schema.createTable('datalog_series', (table) => {
    table.uuid('upload_id').primary().references('id').inTable('uploads').onDelete('CASCADE');
    table.specificType('time_s', 'double precision[]').notNullable();
    table.specificType('boost_pa', 'double precision[]').notNullable();
    for (const column of OPTIONAL_SERIES) table.specificType(column, 'double precision[]').nullable();
    table.integer('point_count').notNullable();
    // Whether a member has confirmed the column mapping; overlays and fits wait for it.
    table.boolean('mapping_confirmed').notNullable().defaultTo(false);
    table.timestamps(true, true);
    table.check('point_count >= 2', [], 'datalog_series_points_check');
    table.check('cardinality(time_s) = point_count and cardinality(boost_pa) = point_count', [], 'datalog_series_length_check');
    for (const column of OPTIONAL_SERIES) {
      table.check(`${column} is null or cardinality(${column}) = point_count`, [], `datalog_series_${column}_length_check`);
    }
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('datalog_series');
}
