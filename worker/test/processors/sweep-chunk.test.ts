import { defaultScenario, type Scenario } from '@crackpoint/sim-core';
import { UnrecoverableError } from 'bullmq';
import type { Knex } from 'knex';
import { describe, expect, it } from 'vitest';
import { computePointRow, processSweepChunk } from '../../src/processors/sweep-chunk.ts';

const sweepId = '6f1c2d3e-4b5a-4c6d-8e7f-901234567890';
const axes = [
  { path: 'springs.0.seatForceN', values: [100, 150] },
  { path: 'exhaust.ratio', values: [1.2, 1.5, 1.8] },
];

describe('computePointRow', () => {
  it('records the axis values of the point, first axis slowest', () => {
    const row = computePointRow(sweepId, defaultScenario(), axes, 4);
    expect(row).toMatchObject({ sweep_id: sweepId, point_index: 4, axis0: 150, axis1: 1.5, axis2: null });
  });

  it('stores the static crack and full-open boost of an ordinary point', () => {
    const row = computePointRow(sweepId, defaultScenario(), axes, 0);
    expect(row.status).toBe('ok');
    expect(row.error).toBeNull();
    expect(row.crack_boost_pa).toBeGreaterThan(0);
    expect(row.full_open_boost_pa!).toBeGreaterThan(row.crack_boost_pa!);
  });

  it('records a point the model cannot evaluate as failed, with its reason, instead of throwing', () => {
    const broken = { springs: [{ from: 'seat', seatForceN: 1, rateNPerM: 1 }], exhaust: { ratio: 1 } } as unknown as Scenario;
    const row = computePointRow(sweepId, broken, axes, 1);
    expect(row.status).toBe('failed');
    expect(row.crack_boost_pa).toBeNull();
    expect(typeof row.error).toBe('string');
    expect(row.error!.length).toBeGreaterThan(0);
    expect(row.axis0).toBe(100);
  });
});

describe('processSweepChunk', () => {
  // The payload is checked before any query, so no database is needed to show it.
  const noDatabase = (() => {
    throw new Error('the database must not be reached');
  }) as unknown as Knex;

  it.each([{}, { sweepId: 'x', chunkIndex: 0 }, { sweepId, chunkIndex: -2 }, null])(
    'fails a bad payload %j as unrecoverable, so it is not retried',
    async (payload) => {
      await expect(processSweepChunk({ knex: noDatabase }, payload)).rejects.toBeInstanceOf(UnrecoverableError);
    },
  );
});
