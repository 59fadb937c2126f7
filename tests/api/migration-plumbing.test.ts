import { defaultScenario, parseScenario } from '@crackpoint/sim-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { up } from '../../migrations/20261205120001_update_scenario_plumbing.ts';
import { createTestContext, createWorkspace, deleteWorkspace, type TestContext, type TestWorkspace } from './helpers/context.ts';

/**
 * Scenarios saved before MODEL.md §4b carry the old defaults written out (a 1 mm port bore, 60 cm³ and 25 cm³
 * chambers, a 1 mm restrictor on every solenoid). The migration takes those to the new plumbing and keeps what a
 * user entered; every migrated scenario reads again through sim-core's schema.
 */

let ctx: TestContext;
let shop: TestWorkspace;

beforeAll(async () => {
  ctx = createTestContext();
  shop = await createWorkspace(ctx.knex, 'plumbing-migration');
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

/** The default scenario as the old schema wrote it out. */
function savedBefore(overrides: { wastegate?: Record<string, unknown>; control?: Record<string, unknown> } = {}) {
  const s = defaultScenario() as unknown as Record<string, Record<string, unknown>>;
  const { plumbing: _dropped, ...rest } = s;
  return {
    ...rest,
    wastegate: { ...s.wastegate, portDiameterM: 0.001, topChamberVolumeM3: 60e-6, bottomChamberVolumeM3: 25e-6, ...overrides.wastegate },
    control: overrides.control ?? s.control,
  };
}

async function insert(data: unknown): Promise<string> {
  const [row] = await ctx.knex('scenarios')
    .insert({ workspace_id: shop.id, owner_id: shop.members.engineer.id, name: 'Saved before the plumbing', data: JSON.stringify(data) })
    .returning<{ id: string }[]>('id');
  return row!.id;
}

const dataOf = async (id: string) => (await ctx.knex('scenarios').where({ id }).first<{ data: Record<string, Record<string, unknown>> }>()).data;

describe('migration 20261205120001: scenario plumbing', () => {
  it('takes the old defaults to the new plumbing, drops the solenoid restrictor, and keeps what a user entered', async () => {
    const defaults = await insert(savedBefore());
    const solenoid = await insert(savedBefore({ control: { kind: 'solenoid-4port', duty: 0.4, solenoidDiameterM: 0.0015, restrictorDiameterM: 0.001 } }));
    const entered = await insert(savedBefore({ wastegate: { portDiameterM: 0.002, topChamberVolumeM3: 80e-6, bottomChamberVolumeM3: 30e-6 } }));
    // The old schema refuses none of these; the new one refuses the solenoid's restrictor.
    expect(parseScenario(await dataOf(solenoid)).ok).toBe(false);

    await up(ctx.knex);

    const d = await dataOf(defaults);
    expect(d.wastegate!.portDiameterM).toBe(0.003);
    expect(d.wastegate).not.toHaveProperty('topChamberVolumeM3');
    expect(d.wastegate).not.toHaveProperty('bottomChamberVolumeM3');
    const s = await dataOf(solenoid);
    expect(s.control).toEqual({ kind: 'solenoid-4port', duty: 0.4, solenoidDiameterM: 0.0015 });
    const e = await dataOf(entered);
    expect(e.wastegate).toMatchObject({ portDiameterM: 0.002, topChamberVolumeM3: 80e-6, bottomChamberVolumeM3: 30e-6 });
    for (const id of [defaults, solenoid, entered]) {
      const parsed = parseScenario(await dataOf(id));
      expect(parsed.ok, JSON.stringify(parsed.ok ? null : parsed.issues)).toBe(true);
    }
  });
});
