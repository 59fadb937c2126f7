import type { Knex } from 'knex';

const PURCHASE_STATES = ['pending', 'paid'] as const;

function quoted(values: readonly string[]): string {
  return values.map((value) => `'${value}'`).join(', ');
}

export async function up(knex: Knex): Promise<void> {
  // The ledger row a purchase credited must sit in the purchase's own workspace (composite key below).
  await knex.schema.alterTable('usage_ledger', (table) => table.unique(['id', 'workspace_id'], { indexName: 'usage_ledger_id_workspace_unique' }));

  // A pack of compute units bought through the payment provider's checkout: pending from the moment the
  // checkout is opened, paid once its signed completion event has credited the ledger.
  await knex.schema.createTable('purchases', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    // The admin who opened the checkout; the purchase stays in the books when they leave.
    table.uuid('buyer_id').nullable();
    table.text('pack_id').notNullable();
    table.text('pack_name').notNullable();
    table.bigInteger('compute_units').notNullable();
    // In the currency's smallest unit (cents), as the provider counts it.
    table.integer('amount_cents').notNullable();
    table.text('currency').notNullable();
    table.text('state').notNullable().defaultTo('pending');
    // The provider's Checkout Session: one purchase per session, so a session is credited at most once.
    table.text('checkout_session_id').notNullable().unique();
    table.text('checkout_url').nullable();
    // The event that credited it: unique, so one event can never pay for two purchases.
    table.text('paid_event_id').nullable().unique();
    table.uuid('usage_entry_id').nullable();
    table.timestamp('paid_at', { useTz: true }).nullable();
    table.timestamps(true, true);
    table.index(['workspace_id', 'created_at']);
    table.index(['buyer_id']);
    table.index(['usage_entry_id']);
    table.check(`state in (${quoted(PURCHASE_STATES)})`, [], 'purchases_state_check');
    table.check('compute_units > 0', [], 'purchases_units_check');
    table.check('amount_cents >= 0', [], 'purchases_amount_check');
    table.check("currency ~ '^[a-z]{3}$'", [], 'purchases_currency_check');
    // Paid means credited: the event, the ledger row and the time are there together, or none is.
    table.check(
      "(state = 'pending' and paid_event_id is null and usage_entry_id is null and paid_at is null) or (state = 'paid' and paid_event_id is not null and paid_at is not null)",
      [],
      'purchases_paid_check',
    );
  });
  // Within the purchase's own workspace; on delete only the reference is cleared, never workspace_id.
  await knex.raw(
    'alter table purchases add constraint purchases_buyer_foreign foreign key (buyer_id, workspace_id) references users (id, workspace_id) on delete set null (buyer_id)',
  );
  await knex.raw(
    'alter table purchases add constraint purchases_usage_entry_foreign foreign key (usage_entry_id, workspace_id) references usage_ledger (id, workspace_id) on delete set null (usage_entry_id)',
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('purchases');
  await knex.schema.alterTable('usage_ledger', (table) => table.dropUnique(['id', 'workspace_id'], 'usage_ledger_id_workspace_unique'));
}
