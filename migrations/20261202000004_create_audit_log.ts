import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  // Written in the same transaction as the change it describes, so a change and its record stand or
  // fall together. Never holds passwords, hashes or tokens.
  await knex.schema.createTable('audit_log', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    // The record outlives the member who made the change.
    table.uuid('actor_id').nullable().references('id').inTable('users').onDelete('SET NULL');
    // Free text checked by the API's AuditAction type: later features add actions without a migration.
    table.text('action').notNullable();
    table.text('entity_type').notNullable();
    table.uuid('entity_id').nullable();
    // Field path → { from, to }; a creation has only `to`, a deletion only `from`.
    table.jsonb('changes').notNullable().defaultTo('{}');
    table.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    table.index(['workspace_id', 'created_at']);
    table.index(['entity_type', 'entity_id']);
    table.index(['actor_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('audit_log');
}
