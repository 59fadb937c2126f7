export { createApp, type AppDeps } from './app.ts';
export { loadConfig, ConfigError, DEV_JWT_SECRET, type Config } from './config.ts';
export { createKnex } from './db.ts';
export { createLogger } from './logger.ts';
export {
  seedDemoWorkspace,
  DEMO_PASSWORD,
  DEMO_SCENARIO_NAME,
  DEMO_USERS,
  DEMO_WORKSPACE,
  type SeedResult,
} from './seed/seed-demo-workspace.ts';
export type { SweepQueue } from './services/sweeps.ts';
export { PullRunner, PullTimeoutError, PullFailedError, type PullRunnerLike, type PullRunnerOptions } from './services/pull/pull-runner.ts';
export { routeTable, allows, ownOnly, OWN_ONLY, ROLES, type AnyRoute, type Access, type Scope } from './routes/index.ts';
// The records later features build on, for scripts and tests that write them directly.
export { Invitation, ShareLink, Upload, UsageEntry, Quota, AuditEntry } from './models/index.ts';
export { deliverSweepNotices, startSweepNotices } from './services/sweep-notices.ts';
export { closeMailer } from './services/mail/mailer.ts';
export { hashSecret } from './services/secret-token.ts';
