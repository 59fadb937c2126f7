import type { Knex } from 'knex';

const POINT_STATUSES = ['ok', 'never-opens', 'open-at-zero-boost', 'failed'] as const;

/** The main metrics of a dynamic pull (MODEL.md §5), one typed column each, so surfaces and sorting never read JSON. */
const DYNAMIC_NUMBERS = [
  'dynamic_crack_boost_pa',
  'peak_boost_pa',
  'settled_boost_pa',
  'static_boost_at_settled_lift_pa',
  'overshoot_pa',
  'time_to_90_percent_s',
  'creep_pa',
  'peak_drive_pa',
  'drive_ratio_seen',
  'max_lift_fraction',
  'gas_used_per_pull_kg',
  'pulls_per_supply',
] as const;

const DYNAMIC_FLAGS = ['over_boost_limit', 'held_open_by_drive', 'supply_below_setpoint', 'past_zero_flow_line', 'not_settled'] as const;

function quoted(values: readonly string[]): string {
  return values.map((value) => `'${value}'`).join(', ');
}

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('sweep_points', (table) => {
    // The dynamic level's own verdict; `status` stays the point's overall one (failed when either level failed).
    table.text('dynamic_status').nullable();
    for (const column of DYNAMIC_NUMBERS) table.double(column).nullable();
    // Null on a static-only point: the flag was never computed, which is not the same as false.
    for (const column of DYNAMIC_FLAGS) table.boolean(column).nullable();
    table.check(`dynamic_status is null or dynamic_status in (${quoted(POINT_STATUSES)})`, [], 'sweep_points_dynamic_status_check');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('sweep_points', (table) => {
    table.dropChecks(['sweep_points_dynamic_status_check']);
    table.dropColumns('dynamic_status', ...DYNAMIC_NUMBERS, ...DYNAMIC_FLAGS);
  });
}
