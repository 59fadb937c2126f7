import { pino, type Logger } from 'pino';
import type { Config } from './config.ts';

export function createLogger(config: Pick<Config, 'logLevel'>): Logger {
  return pino({
    name: 'crackpoint-api',
    level: config.logLevel,
    // Defence in depth: request serializers already leave headers out; these paths must never print.
    redact: { paths: ['req.headers.authorization', 'req.headers.cookie', 'password', 'passwordHash', '*.password'], remove: true },
  });
}
