import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('scenarios', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    // A scenario outlives the member who made it; the workspace still owns it.
    table.uuid('owner_id').nullable().references('id').inTable('users').onDelete('SET NULL');
    table.text('name').notNullable();
    table.jsonb('data').notNullable();
    table.integer('version').notNullable().defaultTo(1);
    table.timestamps(true, true);
    table.index(['workspace_id', 'updated_at']);
    table.index(['owner_id']);
    table.check('version >= 1', [], 'scenarios_version_check');
    table.check("length(btrim(name)) > 0", [], 'scenarios_name_check');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('scenarios');
}
