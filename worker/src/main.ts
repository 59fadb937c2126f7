import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import knexPkg from 'knex';
import { pino } from 'pino';
import { loadWorkerConfig } from './config.ts';
import type { SweepChunkJob } from './queues.ts';
import { startReconciler } from './reconcile.ts';
import { createSweepWorker } from './worker.ts';

const config = loadWorkerConfig();
const logger = pino({ name: 'crackpoint-worker', level: config.logLevel });
const knex = knexPkg({ client: 'pg', connection: config.databaseUrl, pool: { min: 0, max: config.concurrency + 2 } });
const sweepWorker = createSweepWorker({
  knex,
  redis: config.redisUrl,
  queueName: config.queueName,
  concurrency: config.concurrency,
  lockDurationMs: config.lockDurationMs,
  stalledIntervalMs: config.stalledIntervalMs,
  logger,
});
// Its own connection for adding jobs: the worker's is held by blocking reads.
const queueRedis = new Redis(config.redisUrl, { maxRetriesPerRequest: null });
queueRedis.on('error', (error) => logger.warn({ err: error }, 'redis connection error'));
const queue = new Queue<SweepChunkJob>(config.queueName, { connection: queueRedis });
queue.on('error', (error) => logger.warn({ err: error }, 'sweep queue error'));
const reconciler = startReconciler({ knex, queue, intervalMs: config.reconcileIntervalMs, logger });
logger.info({ queue: config.queueName, concurrency: config.concurrency }, 'Crackpoint worker started');

let closing = false;
async function shutdown(signal: string): Promise<void> {
  if (closing) return;
  closing = true;
  logger.info({ signal }, 'finishing running chunks, then stopping');
  // Chunks left unfinished are retried by another worker, so a slow stop may be cut short.
  const forced = setTimeout(() => {
    logger.error('stop took too long; exiting');
    process.exit(1);
  }, 30_000);
  forced.unref();
  await reconciler.stop();
  await sweepWorker.close().catch((error: unknown) => logger.error({ err: error }, 'closing the worker failed'));
  await queue.close().catch(() => undefined);
  await queueRedis.quit().catch(() => queueRedis.disconnect());
  await knex.destroy();
  logger.info('stopped');
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));
