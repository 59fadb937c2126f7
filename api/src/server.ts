import { Queue } from 'bullmq';
import { startReconciler, SWEEP_QUEUE, type SweepChunkJob } from '@crackpoint/worker';
import { Redis } from 'ioredis';
import { createApp } from './app.ts';
import { loadConfig } from './config.ts';
import { createKnex } from './db.ts';
import { createLogger } from './logger.ts';
import { closeMailer } from './services/mail/mailer.ts';
import { PullRunner } from './services/pull/pull-runner.ts';
import { startSweepNotices } from './services/sweep-notices.ts';

const config = loadConfig();
const logger = createLogger(config);
const knex = createKnex(config.databaseUrl);

// The API only adds jobs: with no offline queue a Redis outage fails the enqueue at once (the sweep
// stays queued in PostgreSQL) instead of holding the request open.
const redis = new Redis(config.redisUrl, { enableOfflineQueue: false, maxRetriesPerRequest: 1 });
redis.on('error', (error) => logger.warn({ err: error }, 'redis connection error'));
const queue = new Queue<SweepChunkJob>(SWEEP_QUEUE, { connection: redis });
queue.on('error', (error) => logger.warn({ err: error }, 'sweep queue error'));

// Chunks PostgreSQL holds unfinished but Redis lost are enqueued again, now and periodically.
const reconciler = startReconciler({ knex, queue, intervalMs: config.reconcileIntervalMs, logger });

// "Your sweep finished" e-mails: an outbox in PostgreSQL, safe to run in every API process at once.
const notices = startSweepNotices({ knex, config, logger, intervalMs: config.notifyIntervalMs });

const pulls = new PullRunner({ threads: config.pullThreads, timeLimitMs: config.pullTimeLimitMs });
const app = createApp({ knex, queue, config, logger, pulls });
const server = app.listen(config.port, config.host, () => {
  logger.info({ host: config.host, port: config.port }, 'Crackpoint API listening');
});
server.on('error', (error) => {
  logger.fatal({ err: error }, 'Crackpoint API could not listen');
  process.exit(1);
});

let closing = false;
async function shutdown(signal: string): Promise<void> {
  if (closing) return;
  closing = true;
  logger.info({ signal }, 'shutting down');
  // Stop accepting requests first, let those in flight finish, then release the queue and the pool.
  const forced = setTimeout(() => {
    logger.error('shutdown took too long; exiting');
    process.exit(1);
  }, 15_000);
  forced.unref();
  await new Promise<void>((resolve) => server.close(() => resolve()));
  await pulls.close();
  await reconciler.stop();
  await notices.stop();
  closeMailer(config);
  await queue.close().catch((error: unknown) => logger.warn({ err: error }, 'closing the queue failed'));
  await redis.quit().catch(() => redis.disconnect());
  await knex.destroy();
  logger.info('stopped');
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));
