import type { Knex } from 'knex';

/**
 * MODEL.md §4b (2026-12-05): port plumbing became an input of its own, and the three- and four-port solenoids became
 * switching valves with no restrictor of their own. Stored scenarios (and the snapshots sweeps ran on) were saved with
 * the old defaults written out, which the audit found to be a hidden 1 mm restrictor: a 1 mm port bore and fixed
 * 60 cm³ / 25 cm³ chambers. A value equal to an old default goes to the new one (a 3 mm port, chambers derived from
 * the actuator); any other value a user entered stays. The solenoid's restrictor has no place in a switching valve
 * and is dropped.
 */
const DOCUMENTS = [
  { table: 'scenarios', column: 'data' },
  { table: 'sweeps', column: 'scenario_snapshot' },
] as const;

const OLD_PORT_M = 0.001;
const NEW_PORT_M = 0.003;
const OLD_TOP_M3 = 60e-6;
const OLD_BOTTOM_M3 = 25e-6;
const OLD_RESTRICTOR_M = 0.001;

export async function up(knex: Knex): Promise<void> {
  for (const { table, column } of DOCUMENTS) {
    const c = knex.ref(column);
    await knex(table)
      .whereRaw(`jsonb_typeof(??->'control'->'restrictorDiameterM') = 'number'`, [c])
      .update({ [column]: knex.raw(`?? #- '{control,restrictorDiameterM}'`, [c]) });
    await knex(table)
      .whereRaw(`(??->'wastegate'->>'portDiameterM')::numeric = ?`, [c, OLD_PORT_M])
      .update({ [column]: knex.raw(`jsonb_set(??, '{wastegate,portDiameterM}', to_jsonb(?::numeric))`, [c, NEW_PORT_M]) });
    await knex(table)
      .whereRaw(`(??->'wastegate'->>'topChamberVolumeM3')::numeric = ?`, [c, OLD_TOP_M3])
      .update({ [column]: knex.raw(`?? #- '{wastegate,topChamberVolumeM3}'`, [c]) });
    await knex(table)
      .whereRaw(`(??->'wastegate'->>'bottomChamberVolumeM3')::numeric = ?`, [c, OLD_BOTTOM_M3])
      .update({ [column]: knex.raw(`?? #- '{wastegate,bottomChamberVolumeM3}'`, [c]) });
  }
}

/** Back to what the old schema needs: the solenoids' restrictor and the chamber volumes written out again. */
export async function down(knex: Knex): Promise<void> {
  for (const { table, column } of DOCUMENTS) {
    const c = knex.ref(column);
    await knex(table)
      .whereRaw(`??->'control'->>'kind' in ('solenoid-3port', 'solenoid-4port', 'closed-loop')`, [c])
      .whereRaw(`??->'control'->'restrictorDiameterM' is null`, [c])
      .update({ [column]: knex.raw(`jsonb_set(??, '{control,restrictorDiameterM}', to_jsonb(?::numeric))`, [c, OLD_RESTRICTOR_M]) });
    await knex(table)
      .whereRaw(`(??->'wastegate'->>'portDiameterM')::numeric = ?`, [c, NEW_PORT_M])
      .update({ [column]: knex.raw(`jsonb_set(??, '{wastegate,portDiameterM}', to_jsonb(?::numeric))`, [c, OLD_PORT_M]) });
    await knex(table)
      .whereRaw(`??->'wastegate'->'topChamberVolumeM3' is null`, [c])
      .update({ [column]: knex.raw(`jsonb_set(??, '{wastegate,topChamberVolumeM3}', to_jsonb(?::numeric))`, [c, OLD_TOP_M3]) });
    await knex(table)
      .whereRaw(`??->'wastegate'->'bottomChamberVolumeM3' is null`, [c])
      .update({ [column]: knex.raw(`jsonb_set(??, '{wastegate,bottomChamberVolumeM3}', to_jsonb(?::numeric))`, [c, OLD_BOTTOM_M3]) });
    // The plumbing section is the new schema's; the old one refuses it.
    await knex(table).whereRaw(`??->'plumbing' is not null`, [c]).update({ [column]: knex.raw(`?? - 'plumbing'`, [c]) });
  }
}
