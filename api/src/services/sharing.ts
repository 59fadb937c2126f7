import { computeBalance, parseScenario } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import { Scenario, ShareLink, Sweep, Workspace } from '../models/index.ts';
import type { CreateShareLinkBody, ListShareLinksQuery, SendShareLinkBody, SharedView, ShareLinkView } from '../schemas/sharing.ts';
import type { Surface, SurfaceQuery } from '../schemas/sweeps.ts';
import type { AuthContext } from './auth.ts';
import { recordAudit } from './audit.ts';
import { composeMail } from './mail/compose.ts';
import { sendMail } from './mail/mailer.ts';
import { findScenario } from './scenarios.ts';
import { hashSecret, newSecret } from './secret-token.ts';
import { getSurface } from './sweeps.ts';

const DAY_MS = 24 * 3600 * 1000;

type LinkRow = ShareLink & { targetName?: string | null; createdByName?: string | null };

function statusOf(link: ShareLink, now = new Date()): ShareLinkView['status'] {
  if (link.revokedAt) return 'revoked';
  return link.expiresAt <= now ? 'expired' : 'active';
}

function present(link: LinkRow): ShareLinkView {
  const targetId = link.target === 'scenario' ? link.scenarioId : link.sweepId;
  if (!targetId) throw new Error('share link without its target');
  return {
    id: link.id,
    target: link.target,
    targetId,
    targetName: link.targetName ?? '',
    label: link.label,
    status: statusOf(link),
    createdBy: link.createdByName ?? null,
    createdAt: link.createdAt.toISOString(),
    expiresAt: link.expiresAt.toISOString(),
    revokedAt: link.revokedAt ? link.revokedAt.toISOString() : null,
    lastUsedAt: link.lastUsedAt ? link.lastUsedAt.toISOString() : null,
    useCount: link.useCount,
  };
}

/** Links with what they show by name: a sweep is named after its scenario. */
function linksWithNames(knex: Knex) {
  return ShareLink.query(knex)
    .select(
      'share_links.*',
      knex.raw('coalesce(sc.name, sws.name) as target_name'),
      'creator.display_name as created_by_name',
    )
    .leftJoin('scenarios as sc', 'sc.id', 'share_links.scenario_id')
    .leftJoin('sweeps as sw', 'sw.id', 'share_links.sweep_id')
    .leftJoin('scenarios as sws', 'sws.id', 'sw.scenario_id')
    .leftJoin('users as creator', 'creator.id', 'share_links.created_by');
}

async function targetName(knex: Knex, workspaceId: string, target: CreateShareLinkBody['target'], id: string): Promise<string> {
  if (target === 'scenario') return (await findScenario(knex, workspaceId, id)).name;
  const sweep = await Sweep.query(knex).modify('inWorkspace', workspaceId).findById(id).withGraphFetched('scenario');
  if (!sweep) throw AppError.notFound('Sweep');
  return sweep.scenario?.name ?? 'Sweep';
}

export function shareUrl(config: Config, secret: string): string {
  return `${config.publicUrl}/shared/${secret}`;
}

/** The secret is in this answer only; the database keeps its SHA-256. */
export async function createShareLink(
  knex: Knex,
  config: Config,
  auth: AuthContext,
  input: CreateShareLinkBody,
): Promise<{ shareLink: ShareLinkView; token: string; url: string }> {
  const name = await targetName(knex, auth.workspaceId, input.target, input.targetId);
  const { secret, hash } = newSecret();
  const link = await knex.transaction(async (trx) => {
    const created = await ShareLink.query(trx).insertAndFetch({
      workspaceId: auth.workspaceId,
      tokenHash: hash,
      target: input.target,
      scenarioId: input.target === 'scenario' ? input.targetId : null,
      sweepId: input.target === 'sweep' ? input.targetId : null,
      label: input.label,
      createdBy: auth.userId,
      expiresAt: new Date(Date.now() + input.expiresInDays * DAY_MS),
    });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'share',
      entityType: 'share_link',
      entityId: created.id,
      changes: {
        target: { to: input.target },
        targetId: { to: input.targetId },
        label: { to: input.label },
        expiresAt: { to: created.expiresAt.toISOString() },
      },
    });
    return created;
  });
  return {
    shareLink: present({ ...link, targetName: name, createdByName: auth.user.displayName } as LinkRow),
    token: secret,
    url: shareUrl(config, secret),
  };
}

export async function listShareLinks(knex: Knex, workspaceId: string, query: ListShareLinksQuery): Promise<{ items: ShareLinkView[] }> {
  const links = linksWithNames(knex).where('share_links.workspace_id', workspaceId).orderBy('share_links.created_at', 'desc').limit(500);
  if (query.target) links.where('share_links.target', query.target);
  if (query.targetId) links.where((q) => q.where('share_links.scenario_id', query.targetId!).orWhere('share_links.sweep_id', query.targetId!));
  return { items: ((await links) as LinkRow[]).map(present) };
}

export async function revokeShareLink(knex: Knex, auth: AuthContext, id: string): Promise<void> {
  await knex.transaction(async (trx) => {
    const link = await ShareLink.query(trx).where('workspace_id', auth.workspaceId).findById(id).forUpdate();
    if (!link) throw AppError.notFound('Share link');
    if (link.revokedAt) return;
    await ShareLink.query(trx).findById(id).patch({ revokedAt: new Date(), revokedBy: auth.userId });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'revoke',
      entityType: 'share_link',
      entityId: id,
      changes: { revokedAt: { to: new Date().toISOString() } },
    });
  });
}

/**
 * E-mails a link its maker holds the secret of. The secret must be the one of this link and the link
 * still active: the server never kept it, so it cannot send a link nobody can see.
 */
export async function sendShareLink(
  knex: Knex,
  config: Config,
  auth: AuthContext,
  id: string,
  input: SendShareLinkBody,
): Promise<{ sentTo: string; note: string }> {
  const link = (await linksWithNames(knex).where('share_links.workspace_id', auth.workspaceId).findById(id)) as LinkRow | undefined;
  if (!link) throw AppError.notFound('Share link');
  if (link.tokenHash !== hashSecret(input.token)) {
    throw AppError.validation({ token: 'is not the code of this link' }, 'That is not the code of this link.');
  }
  if (statusOf(link) !== 'active') {
    throw new AppError(409, 'share_link_inactive', 'This link is revoked or has expired; make a new one to send.');
  }
  const workspace = auth.user.workspace ?? (await Workspace.query(knex).findById(auth.workspaceId));
  const what = link.target === 'scenario' ? `the scenario "${link.targetName}"` : `a sweep of "${link.targetName}"`;
  const expires = link.expiresAt.toISOString().slice(0, 10);
  await knex.transaction(async (trx) => {
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'send_share',
      entityType: 'share_link',
      entityId: link.id,
      changes: { sentTo: { to: input.email } },
    });
    await sendMail(
      config,
      composeMail({
        to: input.email,
        subject: `${auth.user.displayName} shared ${link.target === 'scenario' ? 'a scenario' : 'a sweep'} with you on Crackpoint`,
        lead: [
          `${auth.user.displayName} of ${workspace?.name ?? 'a Crackpoint workspace'} shared ${what} with you, to look at without an account.`,
          ...(input.note ? [`Their note: ${input.note}`] : []),
        ],
        action: { label: link.target === 'scenario' ? 'Open the scenario' : 'Open the sweep', url: shareUrl(config, input.token) },
        after: [
          `The link is read-only and works until ${expires} (UTC) unless it is revoked sooner. Anyone holding it can open it, so forward it with care.`,
          'Predictions are estimates: the wastegate and turbo makers’ limits, local rules and a gauge on the car come first.',
        ],
      }),
    );
  });
  return { sentTo: input.email, note: input.note };
}

/**
 * The link a secret names, if it is active. `count` records the visit in the same statement that checks
 * the link, so a revoked or expired link is never counted and two visits never lose one.
 */
async function activeLink(knex: Knex, secret: string, count: boolean): Promise<ShareLink> {
  const hash = hashSecret(secret);
  const now = new Date();
  const query = ShareLink.query(knex).where('token_hash', hash).whereNull('revoked_at').where('expires_at', '>', now);
  const link = count
    ? ((await query.patch({ useCount: ShareLink.raw('use_count + 1'), lastUsedAt: now }).returning('*').first()) as ShareLink | undefined)
    : await query.first();
  if (!link) throw new AppError(404, 'not_found', 'This shared link does not exist, was revoked or has expired.');
  return link;
}

export async function openSharedLink(knex: Knex, secret: string): Promise<SharedView> {
  const link = await activeLink(knex, secret, true);
  const workspace = await Workspace.query(knex).findById(link.workspaceId);
  const share = { target: link.target, label: link.label, workspaceName: workspace?.name ?? '', expiresAt: link.expiresAt.toISOString() };
  if (link.target === 'scenario' && link.scenarioId) {
    const scenario = await Scenario.query(knex).where('workspace_id', link.workspaceId).findById(link.scenarioId);
    if (!scenario) throw new AppError(404, 'not_found', 'This shared link does not exist, was revoked or has expired.');
    const parsed = parseScenario(scenario.data);
    return {
      share,
      scenario: {
        name: scenario.name,
        updatedAt: scenario.updatedAt.toISOString(),
        data: scenario.data as unknown as Record<string, unknown>,
        balance: parsed.ok ? (computeBalance(parsed.scenario) as unknown as Record<string, unknown>) : null,
      },
      sweep: null,
    };
  }
  const sweep = link.sweepId
    ? await Sweep.query(knex).modify('inWorkspace', link.workspaceId).findById(link.sweepId).withGraphFetched('scenario')
    : undefined;
  if (!sweep) throw new AppError(404, 'not_found', 'This shared link does not exist, was revoked or has expired.');
  return {
    share,
    scenario: null,
    sweep: {
      scenarioName: sweep.scenario?.name ?? '',
      level: sweep.level,
      state: sweep.state,
      axes: sweep.axes.map((axis) => ({ path: axis.path, values: axis.values })),
      pointCount: sweep.pointCount,
      pointsDone: sweep.pointsDone,
      pointsFailed: sweep.pointsFailed,
      createdAt: sweep.createdAt.toISOString(),
      finishedAt: sweep.finishedAt ? sweep.finishedAt.toISOString() : null,
    },
  };
}

/** The surface of a shared sweep, through the same service the members' page uses. */
export async function sharedSurface(knex: Knex, secret: string, query: SurfaceQuery): Promise<Surface> {
  const link = await activeLink(knex, secret, false);
  if (link.target !== 'sweep' || !link.sweepId) {
    throw new AppError(404, 'not_found', 'This link shows a scenario, which has no surface.');
  }
  return getSurface(knex, link.workspaceId, link.sweepId, query);
}
