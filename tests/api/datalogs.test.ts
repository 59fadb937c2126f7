import { fromSI, runPull, toSI, units, withFitParameters } from '@crackpoint/sim-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';
import { dbFingerprint } from './helpers/db-fingerprint.ts';
import { EXAMPLE_LOG, EXAMPLE_MAPPING, exampleScenario } from './helpers/fixtures-datalogs.ts';

// Small enough that an oversized file is quick to make; the example log is about 2 kB.
const MAX_BYTES = 8192;

let ctx: TestContext;
let shop: TestWorkspace;
let tokens: Record<Role, string>;

beforeAll(async () => {
  ctx = createTestContext({ DATALOG_MAX_BYTES: String(MAX_BYTES) });
  shop = await createWorkspace(ctx.knex, 'datalogs');
  tokens = await tokensFor(ctx.app, shop);
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const bearer = (role: Role) => ({ Authorization: `Bearer ${tokens[role]}` });

function upload(content: Buffer | string, filename = 'pull.csv', contentType = 'text/csv', role: Role = 'engineer') {
  return request(ctx.app)
    .post('/api/datalogs')
    .set(bearer(role))
    .attach('file', Buffer.isBuffer(content) ? content : Buffer.from(content), { filename, contentType });
}

async function confirmedLog(content: Buffer | string = EXAMPLE_LOG, mapping: object = EXAMPLE_MAPPING): Promise<string> {
  const uploaded = await upload(content);
  expect(uploaded.status, JSON.stringify(uploaded.body)).toBe(201);
  const mapped = await request(ctx.app).put(`/api/datalogs/${uploaded.body.datalog.id}/mapping`).set(bearer('engineer')).send(mapping);
  expect(mapped.status, JSON.stringify(mapped.body)).toBe(200);
  return uploaded.body.datalog.id as string;
}

/** A scenario a member of `owner`'s role made (builders fit and overlay only on their own: route-def.ts, OWN_ONLY). */
async function scenarioOf(data: unknown, name = 'Harrow Lane 2.0 L four', owner: Role = 'engineer'): Promise<string> {
  const response = await request(ctx.app).post('/api/scenarios').set(bearer(owner)).send({ name, data });
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  return response.body.scenario.id as string;
}

/** A CSV of a pull of the example scenario with the given ratio and seat force, boost in kPa absolute as a MAP sensor logs it. */
function synthesisedMapLog(ratio: number, seatForceN: number): string {
  const pull = runPull(withFitParameters(exampleScenario(), { ratio, seatForceN }));
  const lines = ['Timestamp (ms),RPM,MAP (kPa),WGDC (%)'];
  // Deterministic "noise" of ±0.3 kPa (a few tenths of a psi), so the test needs no random generator.
  for (let i = 0; i < pull.series.timeS.length; i += 4) {
    const wobble = 0.3 * Math.sin(i * 1.7);
    const mapKpa = fromSI(units.kPa, pull.series.boostPa[i]!) + 101.325 + wobble;
    lines.push(`${Math.round(pull.series.timeS[i]! * 1000) + 50_000},${Math.round(pull.series.rpm[i]!)},${mapKpa.toFixed(2)},0`);
  }
  return `${lines.join('\n')}\n`;
}

describe('POST /api/datalogs', () => {
  it('stores the example log with its detected columns and units and its series in SI', async () => {
    const response = await upload(EXAMPLE_LOG, 'four-cylinder-pull.csv');
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    const log = response.body.datalog;
    expect(log).toMatchObject({ filename: 'four-cylinder-pull.csv', rowCount: 81, mappingConfirmed: false, uploadedBy: shop.members.engineer.id });
    expect(log.columns).toEqual(['Time (s)', 'Engine speed (rpm)', 'Boost (psi)', 'Drive pressure (psi)']);
    expect(log.mapping).toEqual(EXAMPLE_MAPPING);
    expect(log.detectionNotes.boost).toBe('unit from the header');
    expect(log.durationS).toBeCloseTo(4, 9);

    const row = await ctx.knex('uploads').where({ id: log.id }).first();
    expect(row).toMatchObject({ workspace_id: shop.id, kind: 'datalog', row_count: 81 });
    expect(Buffer.compare(row.content, EXAMPLE_LOG)).toBe(0);
    const series = await ctx.knex('datalog_series').where({ upload_id: log.id }).first();
    expect(series.point_count).toBe(81);
    // The log's own clock starts at 12.40 s; the series starts at the first row.
    expect(series.time_s[0]).toBe(0);
    expect(series.time_s[80]).toBeCloseTo(4, 9);
    // Boost (psi) 0.14 in the first row, in Pa gauge (1 psi = 6894.757 Pa, NIST SP 811).
    expect(series.boost_pa[0]).toBeCloseTo(0.14 * 6894.757, 1);
    expect(series.rpm[0]).toBe(2500);
    expect(series.duty).toBeNull();
  });

  it('reads a logger export with milliseconds, absolute MAP in kPa, duty in per cent and semicolons', async () => {
    const csv = 'Time (ms);Engine RPM;MAP (kPa);WG duty (%)\n0;3000;101,3;10\n50;3100;104,0;10\n100;3200;110,5;20\n150;3300;120,0;30\n200;3400;131,3;40\n';
    const response = await upload(csv, 'export.csv');
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    expect(response.body.datalog.mapping).toMatchObject({
      time: { column: 'Time (ms)', unit: 'ms' },
      rpm: { column: 'Engine RPM', unit: 'rpm' },
      boost: { column: 'MAP (kPa)', unit: 'kPa-abs' },
      duty: { column: 'WG duty (%)', unit: '%' },
    });
    const detail = await request(ctx.app).get(`/api/datalogs/${response.body.datalog.id}`).set(bearer('analyst'));
    expect(detail.status).toBe(200);
    expect(detail.body.series.timeS).toEqual([0, 0.05, 0.1, 0.15, 0.2]);
    // 131.3 kPa absolute against the standard atmosphere (101.325 kPa, ISO 2533) is 29.975 kPa gauge.
    expect(detail.body.series.boostPa[4]).toBeCloseTo(29_975, 6);
    expect(detail.body.series.duty).toEqual([0.1, 0.1, 0.2, 0.3, 0.4]);
  });

  const badFiles: [string, () => request.Test, number, string, RegExp][] = [
    ['a picture, not a log', () => upload(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0]), 'photo.png', 'image/png'), 415, 'not_a_datalog', /CSV/],
    ['binary bytes under a .csv name', () => upload(Buffer.from([0x50, 0x4b, 0x03, 0x04, 0, 0, 0x14, 0]), 'log.csv'), 422, 'not_a_datalog', /not a text file/],
    ['no header row', () => upload('0,1\n1,2\n2,3\n3,4\n4,5\n5,6\n'), 422, 'not_a_datalog', /header/],
    ['rows of different widths', () => upload('Time (s),Boost (psi)\n0,1\n0.1,2,9\n0.2,3\n0.3,4\n0.4,5\n'), 422, 'not_a_datalog', /not a CSV table/],
    ['too few rows', () => upload('Time (s),Boost (psi)\n0,1\n0.1,2\n'), 422, 'not_a_datalog', /at least 5/],
    ['no boost column', () => upload('Time (s),Coolant (C)\n0,80\n1,81\n2,82\n3,83\n4,84\n'), 422, 'datalog_missing_columns', /no column for boost/],
    ['text in the boost column', () => upload('Time (s),Boost (psi)\n0,1\n0.1,2\n0.2,n/a\n0.3,4\n0.4,5\n'), 422, 'datalog_not_numeric', /text \("n\/a"\) in row 4/],
    ['time going backwards', () => upload('Time (s),Boost (psi)\n0,1\n0.1,2\n0.05,3\n0.3,4\n0.4,5\n'), 422, 'datalog_time_not_increasing', /row 4/],
    ['a file over the size limit', () => upload(`Time (s),Boost (psi)\n${'0.1,1.0\n'.repeat(1200)}`), 413, 'file_too_large', /at most 8 kB/],
  ];
  for (const [what, send, status, code, message] of badFiles) {
    it(`refuses ${what} with ${status} naming the file, and stores nothing`, async () => {
      const before = await dbFingerprint(ctx.knex);
      const response = await send();
      expect(response.status, JSON.stringify(response.body)).toBe(status);
      expect(response.body.error.code).toBe(code);
      expect(response.body.error.fields.file).toMatch(message);
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    });
  }

  it('stops reading an upload at the configured limit, not at the 20 MB ceiling', async () => {
    // Four times the limit: the form parser refuses it itself (its own words), before any of it is kept.
    const response = await upload(`Time (s),Boost (psi)\n${'0.1,1.0\n'.repeat(4 * 1200)}`);
    expect(response.status).toBe(413);
    expect(response.body.error).toMatchObject({ code: 'file_too_large', message: 'The file is larger than the 8 kB this accepts.' });
  });

  it('refuses a form without a file with 400 naming it, and a JSON body with 415', async () => {
    const before = await dbFingerprint(ctx.knex);
    const noFile = await request(ctx.app).post('/api/datalogs').set(bearer('engineer')).field('note', 'forgot the file');
    expect(noFile.status).toBe(400);
    expect(noFile.body.error.fields.file).toMatch(/is required/);
    const json = await request(ctx.app).post('/api/datalogs').set(bearer('engineer')).send({ file: 'Time,Boost' });
    expect(json.status).toBe(415);
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('lets analysts read logs but not upload them', async () => {
    const refused = await upload(EXAMPLE_LOG, 'pull.csv', 'text/csv', 'analyst');
    expect(refused.status).toBe(403);
    const list = await request(ctx.app).get('/api/datalogs').set(bearer('analyst'));
    expect(list.status).toBe(200);
    expect(list.body.total).toBeGreaterThanOrEqual(1);
    expect(list.body.items[0]).toHaveProperty('peakBoostPa');
    expect(list.body.items[0]).not.toHaveProperty('series');
  });
});

describe('PUT /api/datalogs/:id/mapping', () => {
  it('parses the file again with the member’s units and marks the mapping confirmed', async () => {
    const id = (await upload(EXAMPLE_LOG)).body.datalog.id as string;
    const mapping = { ...EXAMPLE_MAPPING, boost: { column: 'Boost (psi)', unit: 'kPa' }, drive: null };
    const response = await request(ctx.app).put(`/api/datalogs/${id}/mapping`).set(bearer('engineer')).send(mapping);
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body.datalog.mappingConfirmed).toBe(true);
    expect(response.body.datalog.mapping.boost.unit).toBe('kPa');
    // The first row's 0.14 now read as kPa.
    expect(response.body.series.boostPa[0]).toBeCloseTo(140, 6);
    expect(response.body.series.drivePa).toBeNull();
    const stored = await ctx.knex('datalog_series').where({ upload_id: id }).first();
    expect(stored.mapping_confirmed).toBe(true);
    expect(stored.drive_pa).toBeNull();
  });

  it('refuses a column the log does not have, a unit of another quantity and one column twice, changing nothing', async () => {
    const id = (await upload(EXAMPLE_LOG)).body.datalog.id as string;
    const cases: [object, number, string][] = [
      [{ ...EXAMPLE_MAPPING, boost: { column: 'Boost (bar)', unit: 'bar' } }, 422, 'boost.column'],
      [{ ...EXAMPLE_MAPPING, boost: { column: 'Boost (psi)', unit: 'rpm' } }, 400, 'boost.unit'],
      [{ ...EXAMPLE_MAPPING, drive: { column: 'Boost (psi)', unit: 'psi' } }, 400, 'drive.column'],
      [{ ...EXAMPLE_MAPPING, time: { column: 'Engine speed (rpm)', unit: 's' } }, 400, 'rpm.column'],
    ];
    for (const [mapping, status, field] of cases) {
      const before = await dbFingerprint(ctx.knex);
      const response = await request(ctx.app).put(`/api/datalogs/${id}/mapping`).set(bearer('engineer')).send(mapping);
      expect(response.status, JSON.stringify(response.body)).toBe(status);
      expect(Object.keys(response.body.error.fields)).toContain(field);
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    }
  });

  it('refuses a mapped column with text in it, naming the quantity’s column', async () => {
    const id = (await upload('Time (s),Boost (psi),Notes\n0,1,start\n0.1,2,x\n0.2,3,y\n0.3,4,z\n0.4,5,end\n')).body.datalog.id as string;
    const before = await dbFingerprint(ctx.knex);
    const response = await request(ctx.app)
      .put(`/api/datalogs/${id}/mapping`)
      .set(bearer('engineer'))
      .send({ time: { column: 'Time (s)', unit: 's' }, boost: { column: 'Boost (psi)', unit: 'psi' }, supply: { column: 'Notes', unit: 'psi' } });
    expect(response.status).toBe(422);
    expect(response.body.error.code).toBe('datalog_not_numeric');
    expect(response.body.error.fields['supply.column']).toMatch(/text \("start"\) in row 2/);
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('lets a builder change only the logs they uploaded', async () => {
    const id = (await upload(EXAMPLE_LOG)).body.datalog.id as string;
    const response = await request(ctx.app).put(`/api/datalogs/${id}/mapping`).set(bearer('builder')).send(EXAMPLE_MAPPING);
    expect(response.status).toBe(403);
  });
});

describe('POST /api/datalogs/:id/overlay', () => {
  it('waits for the mapping to be confirmed', async () => {
    const id = (await upload(EXAMPLE_LOG)).body.datalog.id as string;
    const scenarioId = await scenarioOf(exampleScenario());
    const response = await request(ctx.app).post(`/api/datalogs/${id}/overlay`).set(bearer('engineer')).send({ scenarioId });
    expect(response.status).toBe(409);
    expect(response.body.error.code).toBe('mapping_not_confirmed');
  });

  it('puts the measured series beside a simulated pull of the scenario', async () => {
    const id = await confirmedLog();
    const scenarioId = await scenarioOf(exampleScenario(), undefined, 'builder');
    const response = await request(ctx.app).post(`/api/datalogs/${id}/overlay`).set(bearer('builder')).send({ scenarioId });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    const { overlay } = response.body;
    expect(overlay.scenarioId).toBe(scenarioId);
    expect(overlay.measured.timeS).toHaveLength(81);
    expect(overlay.measured.drivePa).toHaveLength(81);
    expect(overlay.simulated.timeS.length).toBeGreaterThan(100);
    expect(overlay.pointsCompared).toBe(81);
    // The log was made with ratio 1.62 and 310 N against the scenario's 1.5 and 290 N: close, not equal.
    expect(overlay.rmsBoostDifferencePa).toBeGreaterThan(toSI(units.psi, 0.1));
    expect(overlay.rmsBoostDifferencePa).toBeLessThan(toSI(units.psi, 3));
  });

  it('answers another workspace’s scenario like a missing one', async () => {
    const id = await confirmedLog();
    const other = await createWorkspace(ctx.knex, 'datalogs-other');
    try {
      const [row] = await ctx.knex('scenarios').insert({ workspace_id: other.id, name: 'Elsewhere', data: JSON.stringify(exampleScenario()) }).returning('id');
      const response = await request(ctx.app).post(`/api/datalogs/${id}/overlay`).set(bearer('engineer')).send({ scenarioId: row.id });
      expect(response.status).toBe(404);
    } finally {
      await deleteWorkspace(ctx.knex, other);
    }
  });
});

describe('POST /api/datalogs/:id/fit', () => {
  it('recovers the ratio and seat force the example log was made with, within 2 %, into a new copy of the scenario', async () => {
    const id = await confirmedLog();
    const original = exampleScenario();
    const scenarioId = await scenarioOf(original, 'Harrow Lane 2.0 L four');
    const response = await request(ctx.app).post(`/api/datalogs/${id}/fit`).set(bearer('engineer')).send({ scenarioId });
    expect(response.status, JSON.stringify(response.body).slice(0, 400)).toBe(201);
    const { fit, scenario } = response.body;
    // examples/four-cylinder-pull.datalog.csv: the model's pull at ratio 1.62 and 310 N, with 0.1 psi of noise.
    expect(Math.abs(fit.ratio - 1.62) / 1.62).toBeLessThan(0.02);
    expect(Math.abs(fit.seatForceN - 310) / 310).toBeLessThan(0.02);
    expect(fit.converged).toBe(true);
    expect(fit.poorFit).toBe(false);
    expect(fit.rmsResidualPa).toBeLessThan(fit.initialRmsResidualPa);
    expect(fit.evaluations).toBeGreaterThan(3);

    expect(scenario.id).not.toBe(scenarioId);
    expect(scenario.name).toBe('Harrow Lane 2.0 L four — fitted to pull.csv');
    expect(scenario.ownerId).toBe(shop.members.engineer.id);
    expect(scenario.data.exhaust.ratio).toBeCloseTo(fit.ratio, 12);
    expect(scenario.data.springs[0]).toEqual({ from: 'seat', seatForceN: fit.seatForceN, rateNPerM: 5000 });
    const untouched = await ctx.knex('scenarios').where({ id: scenarioId }).first();
    expect(untouched.data.exhaust.ratio).toBe(1.5);
    expect(untouched.version).toBe(1);
    const audit = await ctx.knex('audit_log').where({ entity_id: scenario.id, action: 'create' }).first();
    expect(audit.changes.fittedFrom.to).toMatchObject({ scenarioId, datalogId: id });
    // One compute unit for each pull the fit ran.
    const charges = await ctx.knex('usage_ledger').where({ scenario_id: scenarioId, kind: 'pull' }).whereLike('note', 'datalog fit%');
    expect(charges.map((c) => Number(c.compute_units))).toEqual([fit.evaluations]);
  });

  it('answers 402 when the workspace has fewer units left than a fit may need, writing nothing', async () => {
    const id = await confirmedLog();
    const scenarioId = await scenarioOf(exampleScenario());
    await ctx.knex('quotas').insert({ workspace_id: shop.id, user_id: null, monthly_compute_units: 0 });
    try {
      const before = await dbFingerprint(ctx.knex);
      const response = await request(ctx.app).post(`/api/datalogs/${id}/fit`).set(bearer('engineer')).send({ scenarioId });
      expect(response.status).toBe(402);
      expect(response.body.error.code).toBe('quota_exceeded');
      expect(response.body.error.message).toMatch(/A datalog fit needs 150 compute units/);
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    } finally {
      await ctx.knex('quotas').where({ workspace_id: shop.id }).delete();
    }
  });

  it('fits a logger export in milliseconds and absolute kPa as well', async () => {
    const id = await confirmedLog(synthesisedMapLog(1.8, 260), {
      time: { column: 'Timestamp (ms)', unit: 'ms' },
      boost: { column: 'MAP (kPa)', unit: 'kPa-abs' },
      rpm: { column: 'RPM', unit: 'rpm' },
    });
    const scenarioId = await scenarioOf(exampleScenario(), undefined, 'builder');
    const response = await request(ctx.app).post(`/api/datalogs/${id}/fit`).set(bearer('builder')).send({ scenarioId, name: 'MAP export fit' });
    expect(response.status, JSON.stringify(response.body).slice(0, 400)).toBe(201);
    expect(Math.abs(response.body.fit.ratio - 1.8) / 1.8).toBeLessThan(0.02);
    expect(Math.abs(response.body.fit.seatForceN - 260) / 260).toBeLessThan(0.02);
    expect(response.body.scenario.name).toBe('MAP export fit');
  });

  it('answers a log the model cannot explain with a poor fit and writes no scenario', async () => {
    const flat = `Time (s),Boost (psi)\n${Array.from({ length: 60 }, (_, i) => `${(i * 0.05).toFixed(2)},12.0`).join('\n')}\n`;
    const id = await confirmedLog(flat, { time: { column: 'Time (s)', unit: 's' }, boost: { column: 'Boost (psi)', unit: 'psi' } });
    const scenarioId = await scenarioOf(exampleScenario());
    const before = await ctx.knex('scenarios').where({ workspace_id: shop.id }).count<{ count: string }[]>('* as count');
    const response = await request(ctx.app).post(`/api/datalogs/${id}/fit`).set(bearer('engineer')).send({ scenarioId });
    expect(response.status).toBe(200);
    expect(response.body.fit.poorFit).toBe(true);
    expect(response.body.fit.rmsResidualPa).toBeGreaterThan(toSI(units.psi, 1));
    expect(response.body.scenario).toBeNull();
    const after = await ctx.knex('scenarios').where({ workspace_id: shop.id }).count<{ count: string }[]>('* as count');
    expect(after).toEqual(before);
  });

  it('refuses a log with no point inside the scenario’s pull with 422, writing nothing', async () => {
    const late = `Time (s),Boost (psi)\n0,0\n${[5, 5.1, 5.2, 5.3, 5.4].map((t) => `${t},5`).join('\n')}\n`;
    const id = await confirmedLog(late, { time: { column: 'Time (s)', unit: 's' }, boost: { column: 'Boost (psi)', unit: 'psi' } });
    const scenarioId = await scenarioOf(exampleScenario());
    const before = await dbFingerprint(ctx.knex);
    const response = await request(ctx.app).post(`/api/datalogs/${id}/fit`).set(bearer('engineer')).send({ scenarioId });
    expect(response.status).toBe(422);
    expect(response.body.error.code).toBe('fit_failed');
    expect(response.body.error.message).toMatch(/engine\.pullDurationS/);
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('does not let analysts fit', async () => {
    const id = await confirmedLog();
    const scenarioId = await scenarioOf(exampleScenario());
    const response = await request(ctx.app).post(`/api/datalogs/${id}/fit`).set(bearer('analyst')).send({ scenarioId });
    expect(response.status).toBe(403);
  });
});

describe('a fit past its time limit', () => {
  let slow: TestContext;
  beforeAll(() => {
    slow = createTestContext({ FIT_TIME_LIMIT_MS: '100' });
  });
  afterAll(async () => {
    await slow.close();
  });

  it('is stopped with 503 and writes no scenario', async () => {
    const id = await confirmedLog();
    const scenarioId = await scenarioOf(exampleScenario());
    const before = await dbFingerprint(ctx.knex);
    const response = await request(slow.app).post(`/api/datalogs/${id}/fit`).set(bearer('engineer')).send({ scenarioId });
    expect(response.status).toBe(503);
    expect(response.body.error.code).toBe('fit_timed_out');
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });
});

describe('GET and DELETE /api/datalogs/:id', () => {
  it('returns the series and deletes the log with it', async () => {
    const id = await confirmedLog();
    const detail = await request(ctx.app).get(`/api/datalogs/${id}`).set(bearer('analyst'));
    expect(detail.status).toBe(200);
    expect(detail.body.series.boostPa).toHaveLength(81);
    expect(detail.body.datalog.mappingConfirmed).toBe(true);

    expect((await request(ctx.app).delete(`/api/datalogs/${id}`).set(bearer('analyst'))).status).toBe(403);
    const deleted = await request(ctx.app).delete(`/api/datalogs/${id}`).set(bearer('engineer'));
    expect(deleted.status).toBe(204);
    expect(await ctx.knex('uploads').where({ id }).first()).toBeUndefined();
    expect(await ctx.knex('datalog_series').where({ upload_id: id }).first()).toBeUndefined();
    expect((await request(ctx.app).get(`/api/datalogs/${id}`).set(bearer('engineer'))).status).toBe(404);
  });
});
