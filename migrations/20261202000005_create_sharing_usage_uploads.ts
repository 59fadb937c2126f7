import type { Knex } from 'knex';

const USER_ROLES = ['admin', 'engineer', 'builder', 'analyst'] as const;
const SHARE_TARGETS = ['scenario', 'sweep'] as const;
const UPLOAD_KINDS = ['datalog'] as const;
/** Kinds that spend compute and kinds that add to what may be spent. */
const USAGE_KINDS = ['pull', 'sweep', 'purchase', 'grant'] as const;

function quoted(values: readonly string[]): string {
  return values.map((value) => `'${value}'`).join(', ');
}

export async function up(knex: Knex): Promise<void> {
  // (id, workspace_id) pairs that the tables below refer to, so a row can only point into its own workspace.
  await knex.schema.alterTable('users', (table) => table.unique(['id', 'workspace_id'], { indexName: 'users_id_workspace_unique' }));
  await knex.schema.alterTable('scenarios', (table) => table.unique(['id', 'workspace_id'], { indexName: 'scenarios_id_workspace_unique' }));
  await knex.schema.alterTable('sweeps', (table) => table.unique(['id', 'workspace_id'], { indexName: 'sweeps_id_workspace_unique' }));

  await knex.schema.createTable('invitations', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    table.text('email').notNullable();
    table.text('role').notNullable();
    // Only a hash of the invitation's secret is kept (SHA-256, hex): the database alone cannot accept it.
    table.text('token_hash').notNullable().unique();
    table.uuid('invited_by').nullable().references('id').inTable('users').onDelete('SET NULL');
    table.timestamp('expires_at', { useTz: true }).notNullable();
    table.timestamp('accepted_at', { useTz: true }).nullable();
    table.uuid('accepted_user_id').nullable().references('id').inTable('users').onDelete('SET NULL');
    table.timestamp('revoked_at', { useTz: true }).nullable();
    table.timestamps(true, true);
    table.index(['workspace_id', 'created_at']);
    table.index(['invited_by']);
    table.index(['accepted_user_id']);
    table.check(`role in (${quoted(USER_ROLES)})`, [], 'invitations_role_check');
    table.check('email = lower(email)', [], 'invitations_email_lower_check');
    table.check('not (accepted_at is not null and revoked_at is not null)', [], 'invitations_state_check');
  });
  // One open invitation per address and workspace; accepted and revoked ones stay as history.
  await knex.raw(
    'create unique index invitations_open_unique on invitations (workspace_id, email) where accepted_at is null and revoked_at is null',
  );

  await knex.schema.createTable('share_links', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    // The link's secret is shown once; only its SHA-256 (hex) is kept and looked up.
    table.text('token_hash').notNullable().unique();
    table.text('target').notNullable();
    table.uuid('scenario_id').nullable();
    table.uuid('sweep_id').nullable();
    table.text('label').notNullable().defaultTo('');
    table.uuid('created_by').nullable().references('id').inTable('users').onDelete('SET NULL');
    table.timestamp('expires_at', { useTz: true }).notNullable();
    table.timestamp('revoked_at', { useTz: true }).nullable();
    table.uuid('revoked_by').nullable().references('id').inTable('users').onDelete('SET NULL');
    table.timestamp('last_used_at', { useTz: true }).nullable();
    table.integer('use_count').notNullable().defaultTo(0);
    table.timestamps(true, true);
    // A link goes with what it shows.
    table.foreign(['scenario_id', 'workspace_id'], 'share_links_scenario_foreign').references(['id', 'workspace_id']).inTable('scenarios').onDelete('CASCADE');
    table.foreign(['sweep_id', 'workspace_id'], 'share_links_sweep_foreign').references(['id', 'workspace_id']).inTable('sweeps').onDelete('CASCADE');
    table.index(['workspace_id', 'created_at']);
    table.index(['scenario_id']);
    table.index(['sweep_id']);
    table.index(['created_by']);
    table.index(['revoked_by']);
    table.check(`target in (${quoted(SHARE_TARGETS)})`, [], 'share_links_target_check');
    table.check(
      "(target = 'scenario' and scenario_id is not null and sweep_id is null) or (target = 'sweep' and sweep_id is not null and scenario_id is null)",
      [],
      'share_links_one_target_check',
    );
    table.check('use_count >= 0', [], 'share_links_use_count_check');
  });

  await knex.schema.createTable('uploads', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    table.uuid('uploaded_by').nullable().references('id').inTable('users').onDelete('SET NULL');
    // The scenario a datalog is compared with (foreign key below); the log stays when the scenario goes.
    table.uuid('scenario_id').nullable();
    table.text('kind').notNullable().defaultTo('datalog');
    table.text('filename').notNullable();
    table.text('content_type').notNullable();
    table.bigInteger('byte_size').notNullable();
    table.text('sha256').notNullable();
    table.binary('content').notNullable();
    // How the file's columns map to the model's quantities and units, once the member has said so.
    table.jsonb('column_map').nullable();
    table.integer('row_count').nullable();
    table.timestamps(true, true);
    table.index(['workspace_id', 'created_at']);
    table.index(['uploaded_by']);
    table.index(['scenario_id']);
    table.check(`kind in (${quoted(UPLOAD_KINDS)})`, [], 'uploads_kind_check');
    table.check('byte_size >= 0 and byte_size = octet_length(content)', [], 'uploads_size_check');
    table.check("sha256 ~ '^[0-9a-f]{64}$'", [], 'uploads_sha256_check');
    table.check('length(btrim(filename)) > 0', [], 'uploads_filename_check');
    table.check('row_count is null or row_count >= 0', [], 'uploads_row_count_check');
  });

  await knex.schema.createTable('usage_ledger', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    // Usage stays in the workspace's books when the member leaves.
    table.uuid('user_id').nullable().references('id').inTable('users').onDelete('SET NULL');
    table.text('kind').notNullable();
    // Always positive; the kind says whether it spends (pull, sweep) or adds (purchase, grant).
    table.bigInteger('compute_units').notNullable();
    // The first day of the calendar month (UTC) the entry counts in, for monthly quotas.
    table.date('period_month').notNullable();
    // What was computed (foreign keys below); the entry stays when the scenario or sweep goes.
    table.uuid('scenario_id').nullable();
    table.uuid('sweep_id').nullable();
    // The payment provider's id for a purchase: unique, so a repeated webhook books it once.
    table.text('external_ref').nullable().unique();
    table.text('note').notNullable().defaultTo('');
    table.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    table.index(['workspace_id', 'period_month']);
    table.index(['user_id', 'period_month']);
    table.index(['scenario_id']);
    table.index(['sweep_id']);
    table.check(`kind in (${quoted(USAGE_KINDS)})`, [], 'usage_ledger_kind_check');
    table.check('compute_units > 0', [], 'usage_ledger_units_check');
    table.check("period_month = date_trunc('month', period_month)", [], 'usage_ledger_period_check');
  });

  // Within the row's own workspace, and on delete only the reference is cleared, never workspace_id
  // (PostgreSQL 15's column list on SET NULL).
  for (const [table, column, target] of [
    ['uploads', 'scenario_id', 'scenarios'],
    ['usage_ledger', 'scenario_id', 'scenarios'],
    ['usage_ledger', 'sweep_id', 'sweeps'],
  ] as const) {
    await knex.raw(
      `alter table ?? add constraint ?? foreign key (??, workspace_id) references ?? (id, workspace_id) on delete set null (??)`,
      [table, `${table}_${column}_foreign`, column, target, column],
    );
  }

  await knex.schema.createTable('quotas', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    // A member's own monthly limit; null for the workspace's limit over all members.
    table.uuid('user_id').nullable();
    table.bigInteger('monthly_compute_units').notNullable();
    table.uuid('set_by').nullable().references('id').inTable('users').onDelete('SET NULL');
    table.timestamps(true, true);
    table.foreign(['user_id', 'workspace_id'], 'quotas_user_foreign').references(['id', 'workspace_id']).inTable('users').onDelete('CASCADE');
    table.index(['user_id']);
    table.index(['set_by']);
    table.check('monthly_compute_units >= 0', [], 'quotas_units_check');
  });
  // One limit per member and one for the workspace: the workspace's row (user_id null) counts as one value.
  await knex.raw('alter table quotas add constraint quotas_scope_unique unique nulls not distinct (workspace_id, user_id)');
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('quotas');
  await knex.schema.dropTableIfExists('usage_ledger');
  await knex.schema.dropTableIfExists('uploads');
  await knex.schema.dropTableIfExists('share_links');
  await knex.schema.dropTableIfExists('invitations');
  await knex.schema.alterTable('sweeps', (table) => table.dropUnique(['id', 'workspace_id'], 'sweeps_id_workspace_unique'));
  await knex.schema.alterTable('scenarios', (table) => table.dropUnique(['id', 'workspace_id'], 'scenarios_id_workspace_unique'));
  await knex.schema.alterTable('users', (table) => table.dropUnique(['id', 'workspace_id'], 'users_id_workspace_unique'));
}
