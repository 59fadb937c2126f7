import { defaultScenario } from '@crackpoint/sim-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';

let ctx: TestContext;
let shop: TestWorkspace;
let tokens: Record<Role, string>;

beforeAll(async () => {
  ctx = createTestContext();
  shop = await createWorkspace(ctx.knex, 'balance');
  tokens = await tokensFor(ctx.app, shop);
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const circle = (diameterM: number) => (Math.PI * diameterM * diameterM) / 4;

/**
 * Hand-worked from MODEL.md §3 for the bottom port on boost, vented downstream, no drive pressure at
 * zero boost: b_crack = F0 / (r·A_v + (A_p − A_s)).
 */
function handCrackBoostPa(ratio: number): number {
  const s = defaultScenario();
  const spring = s.springs[0];
  if (spring?.from !== 'seat') throw new Error('the default spring is given by its seat force');
  const valve = circle(s.wastegate.valveDiameterM);
  const bottom = circle(s.wastegate.actuatorDiameterM) - circle(s.wastegate.shaftDiameterM);
  return spring.seatForceN / (ratio * valve + bottom);
}

describe('POST /api/balance', () => {
  it('returns the crack boost of the scenario, matching the hand-worked balance', async () => {
    const response = await request(ctx.app).post('/api/balance').set('Authorization', `Bearer ${tokens.analyst}`).send({ scenario: defaultScenario() });
    expect(response.status).toBe(200);
    const { balance } = response.body;
    expect(balance.crack.status).toBe('opens');
    // 129 N over 1.5 × 1.673e-3 m² + 2.341e-3 m² is about 26.6 kPa, 3.86 psi.
    expect(balance.crack.boostPa).toBeCloseTo(handCrackBoostPa(1.5), 6);
    expect(balance.crack.boostPa).toBeGreaterThan(26_000);
    expect(balance.crack.boostPa).toBeLessThan(27_000);
    expect(balance.fullOpen.status).toBe('opens');
    expect(balance.fullOpen.boostPa).toBeGreaterThan(balance.crack.boostPa);
  });

  it('answers the 1:1 to 2:1 ratio question, crack boost falling as the ratio rises', async () => {
    const response = await request(ctx.app).post('/api/balance').set('Authorization', `Bearer ${tokens.builder}`).send({ scenario: defaultScenario() });
    const sweep = response.body.balance.ratioSweep as { ratio: number; crack: { boostPa: number } }[];
    expect(sweep[0]?.ratio).toBe(1);
    expect(sweep.at(-1)?.ratio).toBeCloseTo(2, 12);
    expect(sweep[0]?.crack.boostPa).toBeCloseTo(handCrackBoostPa(1), 6);
    expect(sweep.at(-1)!.crack.boostPa).toBeLessThan(sweep[0]!.crack.boostPa);
  });

  it('returns 400 naming scenario.wastegate.valveDiameterM for a negative diameter', async () => {
    const scenario = defaultScenario();
    scenario.wastegate.valveDiameterM = -1;
    const response = await request(ctx.app).post('/api/balance').set('Authorization', `Bearer ${tokens.engineer}`).send({ scenario });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toHaveProperty('scenario.wastegate.valveDiameterM');
  });

  it('returns 400 when the scenario is missing', async () => {
    const response = await request(ctx.app).post('/api/balance').set('Authorization', `Bearer ${tokens.engineer}`).send({});
    expect(response.status).toBe(400);
    expect(Object.keys(response.body.error.fields)[0]).toMatch(/^scenario/);
  });

  it('returns 401 without a token', async () => {
    const response = await request(ctx.app).post('/api/balance').send({ scenario: defaultScenario() });
    expect(response.status).toBe(401);
  });
});
