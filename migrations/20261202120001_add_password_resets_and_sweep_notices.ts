import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('password_resets', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('user_id').notNullable().references('id').inTable('users').onDelete('CASCADE');
    // Only the SHA-256 (hex) of the secret sent by e-mail: the database alone cannot reset a password.
    table.text('token_hash').notNullable().unique();
    table.timestamp('expires_at', { useTz: true }).notNullable();
    // Set when the secret is used (or made void by a newer request), so it works once.
    table.timestamp('used_at', { useTz: true }).nullable();
    table.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    table.index(['user_id', 'created_at']);
    table.check("token_hash ~ '^[0-9a-f]{64}$'", [], 'password_resets_token_hash_check');
  });

  // When the member asked for "your sweep finished" e-mails; null when they do not want them. Sweeps that
  // finished before that instant are never mailed, so opting in does not send a backlog.
  await knex.schema.alterTable('users', (table) => {
    table.timestamp('sweep_notice_since', { useTz: true }).nullable();
  });
  // The outbox mark: set in the same transaction that sends the e-mail, under a row lock.
  await knex.schema.alterTable('sweeps', (table) => {
    table.timestamp('finish_noticed_at', { useTz: true }).nullable();
  });
  await knex.raw('update sweeps set finish_noticed_at = finished_at where finished_at is not null');
  await knex.raw(
    "create index sweeps_finish_notice_pending on sweeps (finished_at) where finish_noticed_at is null and state in ('done', 'failed')",
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('drop index if exists sweeps_finish_notice_pending');
  await knex.schema.alterTable('sweeps', (table) => table.dropColumn('finish_noticed_at'));
  await knex.schema.alterTable('users', (table) => table.dropColumn('sweep_notice_since'));
  await knex.schema.dropTableIfExists('password_resets');
}
