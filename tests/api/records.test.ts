import { createHash, randomBytes } from 'node:crypto';
import { Invitation, Quota, ShareLink, Upload, UsageEntry } from '@crackpoint/api';
import { defaultScenario } from '@crackpoint/sim-core';
import { CheckViolationError, ForeignKeyViolationError, UniqueViolationError } from 'objection';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, type TestContext, type TestWorkspace } from './helpers/context.ts';

/**
 * The tables later features use (invitations, share links, uploads, the usage ledger, quotas): written
 * through their models, with the database refusing what must never be stored.
 */

let ctx: TestContext;
let shop: TestWorkspace;
let rival: TestWorkspace;

beforeAll(async () => {
  ctx = createTestContext();
  shop = await createWorkspace(ctx.knex, 'records');
  rival = await createWorkspace(ctx.knex, 'records-rival');
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await deleteWorkspace(ctx.knex, rival);
  await ctx.close();
});

const tokenHash = () => createHash('sha256').update(randomBytes(32)).digest('hex');
const inAWeek = () => new Date(Date.now() + 7 * 86_400_000);

async function scenarioIn(workspace: TestWorkspace): Promise<string> {
  const [row] = await ctx.knex('scenarios')
    .insert({ workspace_id: workspace.id, owner_id: workspace.members.engineer.id, name: 'Record scenario', data: JSON.stringify(defaultScenario()) })
    .returning<{ id: string }[]>('id');
  return row!.id;
}

async function sweepOf(workspace: TestWorkspace, scenarioId: string): Promise<string> {
  const [row] = await ctx.knex('sweeps')
    .insert({
      workspace_id: workspace.id,
      scenario_id: scenarioId,
      scenario_snapshot: JSON.stringify(defaultScenario()),
      level: 'static',
      axes: JSON.stringify([{ path: 'exhaust.ratio', values: [1.5] }]),
      point_count: 1,
      chunk_size: 1,
    })
    .returning<{ id: string }[]>('id');
  return row!.id;
}

describe('invitations', () => {
  it('keeps one open invitation per address and workspace, and history besides', async () => {
    const invite = (email = 'new.tuner@records.example') =>
      Invitation.query(ctx.knex).insert({
        workspaceId: shop.id,
        email,
        role: 'builder',
        tokenHash: tokenHash(),
        invitedBy: shop.members.admin.id,
        expiresAt: inAWeek(),
      });
    const first = await invite();
    await expect(invite()).rejects.toBeInstanceOf(UniqueViolationError);
    await Invitation.query(ctx.knex).findById(first.id).patch({ revokedAt: new Date() });
    const second = await invite();
    expect(second.id).not.toBe(first.id);
    const stored = await Invitation.query(ctx.knex).findById(second.id);
    expect(stored).toMatchObject({ email: 'new.tuner@records.example', role: 'builder', acceptedAt: null, revokedAt: null });
    expect(stored?.tokenHash).toMatch(/^[0-9a-f]{64}$/);
  });

  it('refuses a role that does not exist and an e-mail that is not lower-case', async () => {
    const base = { workspaceId: shop.id, tokenHash: tokenHash(), expiresAt: inAWeek() };
    await expect(Invitation.query(ctx.knex).insert({ ...base, email: 'a@records.example', role: 'owner' as never })).rejects.toBeInstanceOf(CheckViolationError);
    await expect(Invitation.query(ctx.knex).insert({ ...base, email: 'Mixed@Records.example', role: 'analyst' })).rejects.toBeInstanceOf(CheckViolationError);
  });
});

describe('share links', () => {
  it('point at exactly one scenario or sweep of their own workspace and go with it', async () => {
    const scenarioId = await scenarioIn(shop);
    const sweepId = await sweepOf(shop, scenarioId);
    const link = await ShareLink.query(ctx.knex).insertAndFetch({
      workspaceId: shop.id,
      tokenHash: tokenHash(),
      target: 'scenario',
      scenarioId,
      createdBy: shop.members.analyst.id,
      expiresAt: inAWeek(),
    });
    expect(link).toMatchObject({ target: 'scenario', scenarioId, sweepId: null, useCount: 0, revokedAt: null, label: '' });
    const both = ShareLink.query(ctx.knex).insert({ workspaceId: shop.id, tokenHash: tokenHash(), target: 'scenario', scenarioId, sweepId, expiresAt: inAWeek() });
    await expect(both).rejects.toBeInstanceOf(CheckViolationError);
    const foreign = ShareLink.query(ctx.knex).insert({ workspaceId: rival.id, tokenHash: tokenHash(), target: 'scenario', scenarioId, expiresAt: inAWeek() });
    await expect(foreign).rejects.toBeInstanceOf(ForeignKeyViolationError);

    await ctx.knex('scenarios').where({ id: scenarioId }).delete();
    expect(await ShareLink.query(ctx.knex).findById(link.id)).toBeUndefined();
  });

  it('refuse a second link with the same secret', async () => {
    const hash = tokenHash();
    const scenarioId = await scenarioIn(shop);
    const make = () => ShareLink.query(ctx.knex).insert({ workspaceId: shop.id, tokenHash: hash, target: 'scenario', scenarioId, expiresAt: inAWeek() });
    await make();
    await expect(make()).rejects.toBeInstanceOf(UniqueViolationError);
  });
});

describe('uploads', () => {
  it('keep the file with its size and hash, and outlive the scenario they were compared with', async () => {
    const scenarioId = await scenarioIn(shop);
    const content = Buffer.from('time_s,boost_psi\n0.0,0.1\n0.1,0.4\n', 'utf8');
    const upload = await Upload.query(ctx.knex).insertAndFetch({
      workspaceId: shop.id,
      uploadedBy: shop.members.builder.id,
      scenarioId,
      kind: 'datalog',
      filename: 'harrow-lane-pull-3.csv',
      contentType: 'text/csv',
      byteSize: content.length,
      sha256: createHash('sha256').update(content).digest('hex'),
      content,
    });
    expect(upload.byteSize).toBe(content.length);
    expect(upload.content.equals(content)).toBe(true);

    await ctx.knex('scenarios').where({ id: scenarioId }).delete();
    const kept = await Upload.query(ctx.knex).findById(upload.id);
    expect(kept).toMatchObject({ scenarioId: null, workspaceId: shop.id });
  });

  it('refuse a size that does not match the content', async () => {
    const content = Buffer.from('x');
    const wrong = Upload.query(ctx.knex).insert({
      workspaceId: shop.id,
      filename: 'bad.csv',
      contentType: 'text/csv',
      byteSize: 10,
      sha256: createHash('sha256').update(content).digest('hex'),
      content,
    });
    await expect(wrong).rejects.toBeInstanceOf(CheckViolationError);
  });
});

describe('usage ledger', () => {
  it('books positive amounts by month, a purchase once, and keeps usage when the sweep goes', async () => {
    const scenarioId = await scenarioIn(shop);
    const sweepId = await sweepOf(shop, scenarioId);
    const spent = await UsageEntry.query(ctx.knex).insertAndFetch({
      workspaceId: shop.id,
      userId: shop.members.engineer.id,
      kind: 'sweep',
      computeUnits: 9,
      periodMonth: '2026-12-01',
      scenarioId,
      sweepId,
    });
    expect(spent).toMatchObject({ computeUnits: 9, periodMonth: '2026-12-01' });

    const purchase = () =>
      UsageEntry.query(ctx.knex).insert({ workspaceId: shop.id, kind: 'purchase', computeUnits: 1000, periodMonth: '2026-12-01', externalRef: 'pay_records_1' });
    await purchase();
    await expect(purchase()).rejects.toBeInstanceOf(UniqueViolationError);

    await expect(UsageEntry.query(ctx.knex).insert({ workspaceId: shop.id, kind: 'pull', computeUnits: 0, periodMonth: '2026-12-01' })).rejects.toBeInstanceOf(CheckViolationError);
    await expect(UsageEntry.query(ctx.knex).insert({ workspaceId: shop.id, kind: 'pull', computeUnits: 1, periodMonth: '2026-12-15' })).rejects.toBeInstanceOf(CheckViolationError);

    await ctx.knex('sweeps').where({ id: sweepId }).delete();
    expect(await UsageEntry.query(ctx.knex).findById(spent.id)).toMatchObject({ sweepId: null, scenarioId, workspaceId: shop.id });
  });
});

describe('quotas', () => {
  it('hold one limit for the workspace and one per member of that workspace', async () => {
    const workspaceLimit = () => Quota.query(ctx.knex).insert({ workspaceId: shop.id, userId: null, monthlyComputeUnits: 100_000 });
    await workspaceLimit();
    await expect(workspaceLimit()).rejects.toBeInstanceOf(UniqueViolationError);
    const member = await Quota.query(ctx.knex).insertAndFetch({ workspaceId: shop.id, userId: shop.members.builder.id, monthlyComputeUnits: 5000 });
    expect(member.monthlyComputeUnits).toBe(5000);
    const outsider = Quota.query(ctx.knex).insert({ workspaceId: shop.id, userId: rival.members.builder.id, monthlyComputeUnits: 5000 });
    await expect(outsider).rejects.toBeInstanceOf(ForeignKeyViolationError);
    await expect(Quota.query(ctx.knex).insert({ workspaceId: rival.id, monthlyComputeUnits: -1 })).rejects.toBeInstanceOf(CheckViolationError);
  });
});
