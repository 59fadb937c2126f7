import type { Knex } from 'knex';

/** The shop's hardware library: one table per kind of part, each holding one sim-core scenario section. */
const LIBRARY_TABLES = ['wastegates', 'springs', 'turbos', 'engines', 'supplies'] as const;

export async function up(knex: Knex): Promise<void> {
  for (const name of LIBRARY_TABLES) {
    await knex.schema.createTable(name, (table) => {
      table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
      table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
      table.text('name').notNullable();
      table.text('notes').notNullable().defaultTo('');
      // The part as its sim-core section (validated by the API with sim-core's own schema), SI units.
      table.jsonb('data').notNullable();
      table.integer('version').notNullable().defaultTo(1);
      // An archived part stays readable and stays in the scenarios built from it, but is offered no more.
      table.timestamp('archived_at', { useTz: true }).nullable();
      table.uuid('created_by').nullable().references('id').inTable('users').onDelete('SET NULL');
      table.uuid('updated_by').nullable().references('id').inTable('users').onDelete('SET NULL');
      table.timestamps(true, true);
      // Lets scenarios refer to a part with (id, workspace_id), so a scenario can only use its own shop's parts.
      table.unique(['id', 'workspace_id'], { indexName: `${name}_id_workspace_unique` });
      table.index(['workspace_id', 'updated_at']);
      table.index(['created_by']);
      table.index(['updated_by']);
      table.check('version >= 1', [], `${name}_version_check`);
      table.check('length(btrim(name)) > 0', [], `${name}_name_check`);
      table.check("jsonb_typeof(data) = 'object'", [], `${name}_data_check`);
    });
    // Names are unique per shop and kind, whatever their letter case.
    await knex.raw('create unique index ?? on ?? (workspace_id, lower(name))', [`${name}_workspace_name_unique`, name]);
  }
}

export async function down(knex: Knex): Promise<void> {
  for (const name of [...LIBRARY_TABLES].reverse()) await knex.schema.dropTableIfExists(name);
}
