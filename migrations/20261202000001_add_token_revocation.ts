import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  // Every access token carries the member's token version; raising it ends all their sessions at once
  // (a password change, "sign out everywhere").
  await knex.schema.alterTable('users', (table) => {
    table.integer('token_version').notNullable().defaultTo(0);
    table.check('token_version >= 0', [], 'users_token_version_check');
  });

  // One signed-out token per row, kept only until the token would have expired anyway.
  await knex.schema.createTable('revoked_tokens', (table) => {
    table.uuid('token_id').primary();
    table.uuid('user_id').notNullable().references('id').inTable('users').onDelete('CASCADE');
    table.timestamp('expires_at', { useTz: true }).notNullable();
    table.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    table.index(['expires_at']);
    table.index(['user_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('revoked_tokens');
  await knex.schema.alterTable('users', (table) => {
    table.dropChecks(['users_token_version_check']);
    table.dropColumn('token_version');
  });
}
