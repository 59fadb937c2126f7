import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { Config } from '../config.ts';
import { composeMail } from './mail/compose.ts';
import { sendMail } from './mail/mailer.ts';

/** Sweeps mailed per pass; the next pass takes the rest. */
const BATCH = 20;

interface PendingNotice {
  id: string;
  state: 'done' | 'failed';
  point_count: number;
  points_failed: number;
  finished_at: Date;
  scenario_id: string;
  scenario_name: string;
  email: string;
  display_name: string;
}

function noticeFor(config: Config, row: PendingNotice) {
  const link = `${config.publicUrl}/scenarios/${row.scenario_id}`;
  const done = row.state === 'done';
  const failedPart = row.points_failed > 0 ? ` ${row.points_failed} of its points could not be computed.` : '';
  return composeMail({
    to: row.email,
    subject: done ? `Your sweep of "${row.scenario_name}" is finished` : `Your sweep of "${row.scenario_name}" stopped with a failure`,
    lead: [
      `Hello ${row.display_name},`,
      done
        ? `The sweep of ${row.point_count} points over "${row.scenario_name}" is finished and its surface is ready.${failedPart}`
        : `The sweep of ${row.point_count} points over "${row.scenario_name}" stopped with a failure. The points it finished are kept.${failedPart}`,
    ],
    action: { label: 'Open the scenario', url: link },
    after: ['You get this because you asked for an e-mail when your sweeps finish. Switch it off under your account in Crackpoint.'],
  });
}

/**
 * One pass of the outbox: finished sweeps whose creator opted in and that were not mailed yet. Each is
 * locked (`for update skip locked`), mailed and marked in one transaction, so two API processes never
 * mail the same sweep, and a mail server that refuses leaves it unmarked for the next pass. Returns the
 * number of e-mails sent.
 */
export async function deliverSweepNotices(knex: Knex, config: Config, logger?: Logger): Promise<number> {
  let sent = 0;
  for (;;) {
    const handled = await knex.transaction(async (trx) => {
      const row = (await trx('sweeps as sw')
        .join('users as u', 'u.id', 'sw.created_by')
        .join('scenarios as sc', 'sc.id', 'sw.scenario_id')
        .whereNull('sw.finish_noticed_at')
        .whereIn('sw.state', ['done', 'failed'])
        .whereNotNull('u.sweep_notice_since')
        .whereRaw('sw.finished_at >= u.sweep_notice_since')
        .orderBy('sw.finished_at')
        .first(
          'sw.id',
          'sw.state',
          'sw.point_count',
          'sw.points_failed',
          'sw.finished_at',
          'sw.scenario_id',
          'sc.name as scenario_name',
          'u.email',
          'u.display_name',
        )
        .forUpdate('sw')
        .skipLocked()) as PendingNotice | undefined;
      if (!row) return false;
      await sendMail(config, noticeFor(config, row));
      await trx('sweeps').where({ id: row.id }).update({ finish_noticed_at: trx.fn.now() });
      return true;
    });
    if (!handled) break;
    sent += 1;
    if (sent >= BATCH) break;
  }
  if (sent > 0) logger?.info({ sent }, 'sweep finished e-mails sent');
  return sent;
}

export interface SweepNoticeLoop {
  stop(): Promise<void>;
}

/** Runs the outbox every `intervalMs`, one pass at a time; a failed pass is logged and tried again. */
export function startSweepNotices(options: { knex: Knex; config: Config; logger: Logger; intervalMs: number }): SweepNoticeLoop {
  let running: Promise<unknown> | null = null;
  const tick = () => {
    if (running) return;
    running = deliverSweepNotices(options.knex, options.config, options.logger)
      .catch((error: unknown) => options.logger.warn({ err: error }, 'sweep finished e-mails: pass failed'))
      .finally(() => {
        running = null;
      });
  };
  const timer = setInterval(tick, options.intervalMs);
  timer.unref();
  tick();
  return {
    async stop() {
      clearInterval(timer);
      await running;
    },
  };
}
