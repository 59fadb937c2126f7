import type { Knex } from 'knex';

/** Which library part each single section of a scenario was built from. */
const SINGLE_SOURCES = [
  { column: 'engine_id', table: 'engines' },
  { column: 'turbo_id', table: 'turbos' },
  { column: 'wastegate_id', table: 'wastegates' },
  { column: 'supply_id', table: 'supplies' },
] as const;

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('scenarios', (table) => {
    for (const { column, table: target } of SINGLE_SOURCES) {
      table.uuid(column).nullable();
      // (part, workspace) so a scenario can only name its own shop's parts. NO ACTION rather than
      // RESTRICT: deleting a part in use fails, while deleting a whole workspace (which cascades to both
      // the scenario and the part in one statement) still works, as the check waits for the statement's end.
      table
        .foreign([column, 'workspace_id'], `scenarios_${column}_foreign`)
        .references(['id', 'workspace_id'])
        .inTable(target)
        .onDelete('NO ACTION');
      table.index([column]);
    }
  });

  // Nested springs add, so a scenario may be built from up to three library springs, in order.
  await knex.schema.createTable('scenario_springs', (table) => {
    table.uuid('scenario_id').notNullable().references('id').inTable('scenarios').onDelete('CASCADE');
    table.integer('position').notNullable();
    table.uuid('workspace_id').notNullable();
    table.uuid('spring_id').notNullable();
    table.timestamps(true, true);
    table.primary(['scenario_id', 'position']);
    table
      .foreign(['spring_id', 'workspace_id'], 'scenario_springs_spring_foreign')
      .references(['id', 'workspace_id'])
      .inTable('springs')
      .onDelete('NO ACTION');
    table.foreign('workspace_id', 'scenario_springs_workspace_foreign').references('id').inTable('workspaces').onDelete('CASCADE');
    table.index(['spring_id']);
    table.check('position >= 0 and position < 3', [], 'scenario_springs_position_check');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('scenario_springs');
  await knex.schema.alterTable('scenarios', (table) => {
    for (const { column } of SINGLE_SOURCES) {
      table.dropForeign([column, 'workspace_id'], `scenarios_${column}_foreign`);
      table.dropColumn(column);
    }
  });
}
