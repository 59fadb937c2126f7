import type { Knex } from 'knex';

const SWEEP_LEVELS = ['static', 'dynamic', 'both'] as const;
const SWEEP_STATES = ['queued', 'running', 'done', 'failed', 'cancelled'] as const;
const CHUNK_STATES = ['queued', 'running', 'done'] as const;
const POINT_STATUSES = ['ok', 'never-opens', 'open-at-zero-boost', 'failed'] as const;

function quoted(values: readonly string[]): string {
  return values.map((value) => `'${value}'`).join(', ');
}

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('sweeps', (table) => {
    table.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    table.uuid('workspace_id').notNullable().references('id').inTable('workspaces').onDelete('CASCADE');
    table.uuid('scenario_id').notNullable().references('id').inTable('scenarios').onDelete('CASCADE');
    table.uuid('created_by').nullable().references('id').inTable('users').onDelete('SET NULL');
    // The scenario as it was when the sweep started: later edits to the scenario must not change
    // what the queued chunks compute.
    table.jsonb('scenario_snapshot').notNullable();
    table.text('level').notNullable();
    table.jsonb('axes').notNullable();
    table.text('state').notNullable().defaultTo('queued');
    table.integer('point_count').notNullable();
    table.integer('points_done').notNullable().defaultTo(0);
    table.integer('points_failed').notNullable().defaultTo(0);
    table.integer('chunk_size').notNullable();
    table.timestamp('started_at', { useTz: true }).nullable();
    table.timestamp('finished_at', { useTz: true }).nullable();
    table.timestamps(true, true);
    table.index(['workspace_id', 'updated_at']);
    table.index(['scenario_id', 'created_at']);
    table.index(['created_by']);
    table.check(`level in (${quoted(SWEEP_LEVELS)})`, [], 'sweeps_level_check');
    table.check(`state in (${quoted(SWEEP_STATES)})`, [], 'sweeps_state_check');
    table.check('point_count > 0', [], 'sweeps_point_count_check');
    table.check('chunk_size > 0', [], 'sweeps_chunk_size_check');
    // points_done counts every finished point, failed ones included, so progress is
    // points_done / point_count and points_failed is a subset of points_done.
    table.check(
      'points_failed >= 0 and points_failed <= points_done and points_done <= point_count',
      [],
      'sweeps_progress_check',
    );
  });

  await knex.schema.createTable('sweep_chunks', (table) => {
    table.uuid('sweep_id').notNullable().references('id').inTable('sweeps').onDelete('CASCADE');
    table.integer('chunk_index').notNullable();
    table.integer('first_index').notNullable();
    table.integer('point_count').notNullable();
    table.text('state').notNullable().defaultTo('queued');
    table.integer('attempts').notNullable().defaultTo(0);
    table.timestamps(true, true);
    table.primary(['sweep_id', 'chunk_index']);
    // The primary key's leading column already indexes sweep_id; this one serves "chunks not done".
    table.index(['sweep_id', 'state']);
    table.check(`state in (${quoted(CHUNK_STATES)})`, [], 'sweep_chunks_state_check');
    table.check('chunk_index >= 0 and first_index >= 0 and point_count > 0', [], 'sweep_chunks_range_check');
  });

  await knex.schema.createTable('sweep_points', (table) => {
    table.uuid('sweep_id').notNullable().references('id').inTable('sweeps').onDelete('CASCADE');
    table.integer('point_index').notNullable();
    table.double('axis0').nullable();
    table.double('axis1').nullable();
    table.double('axis2').nullable();
    table.text('status').notNullable();
    table.double('crack_boost_pa').nullable();
    table.double('full_open_boost_pa').nullable();
    table.text('error').nullable();
    table.jsonb('result').nullable();
    table.timestamps(true, true);
    table.primary(['sweep_id', 'point_index']);
    table.index(['sweep_id', 'status']);
    table.check(`status in (${quoted(POINT_STATUSES)})`, [], 'sweep_points_status_check');
    table.check('point_index >= 0', [], 'sweep_points_index_check');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('sweep_points');
  await knex.schema.dropTableIfExists('sweep_chunks');
  await knex.schema.dropTableIfExists('sweeps');
}
