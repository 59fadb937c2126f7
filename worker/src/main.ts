import knexPkg from 'knex';
import { pino } from 'pino';
import { loadWorkerConfig } from './config.ts';
import { SWEEP_QUEUE } from './queues.ts';
import { createSweepWorker } from './worker.ts';

const config = loadWorkerConfig();
const logger = pino({ name: 'crackpoint-worker', level: config.logLevel });
const knex = knexPkg({ client: 'pg', connection: config.databaseUrl, pool: { min: 0, max: config.concurrency + 2 } });
const sweepWorker = createSweepWorker({ knex, redis: config.redisUrl, concurrency: config.concurrency, logger });
logger.info({ queue: SWEEP_QUEUE, concurrency: config.concurrency }, 'Crackpoint worker started');

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
  await sweepWorker.close().catch((error: unknown) => logger.error({ err: error }, 'closing the worker failed'));
  await knex.destroy();
  logger.info('stopped');
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));
