import type { Knex } from 'knex';

// Roles and unit systems are enforced in the database as well as at the edge, so a row written by a
// script or a later migration cannot hold a value the API would not accept.
const USER_ROLES = ['admin', 'engineer', 'builder', 'analyst'] as const;
const UNIT_SYSTEMS = ['us', 'metric'] as const;

function quoted(values: readonly string[]): string {
  return values.map((value) => `'${value}'`).join(', ');
}

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('workspaces', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.text('name').notNullable();
    table.text('slug').notNullable().unique();
    table.timestamps(true, true);
  });

  await knex.schema.createTable('users', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    table.text('email').notNullable().unique();
    table.text('password_hash').notNullable();
    table.text('display_name').notNullable();
    table.text('role').notNullable();
    table.text('unit_system').notNullable().defaultTo('us');
    table.timestamps(true, true);
    table.index(['workspace_id']);
    table.check(`role in (${quoted(USER_ROLES)})`, [], 'users_role_check');
    table.check(`unit_system in (${quoted(UNIT_SYSTEMS)})`, [], 'users_unit_system_check');
    // The API lower-cases e-mails before writing; the database refuses anything else so a unique
    // index on the raw column is also unique case-insensitively.
    table.check('email = lower(email)', [], 'users_email_lower_check');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('users');
  await knex.schema.dropTableIfExists('workspaces');
}
