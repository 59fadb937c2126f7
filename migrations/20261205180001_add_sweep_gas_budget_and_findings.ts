import type { Knex } from 'knex';

/**
 * What a pull now finds beyond MODEL.md §5's first metrics (the gas budget and the notes of §4b), one typed column
 * each so surfaces and sorting never read JSON: how far boost swings about its trend, what a regulated supply passes
 * while armed, the gas of the scenario's planned session, and three findings as flags.
 */
const NUMBERS = ['boost_swing_pa', 'armed_gas_kg_per_s', 'session_gas_kg'] as const;

/** Null on a static-only point or a point computed before these existed: never computed, not false. */
const FLAGS = ['hunting', 'port_lag', 'target_unreachable'] as const;

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('sweep_points', (table) => {
    for (const column of NUMBERS) table.double(column).nullable();
    for (const column of FLAGS) table.boolean(column).nullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('sweep_points', (table) => {
    table.dropColumns(...NUMBERS, ...FLAGS);
  });
}
