import { randomUUID } from 'node:crypto';
import { createApp, createKnex, loadConfig, PullRunner, type Config } from '@crackpoint/api';
import { Queue } from 'bullmq';
import bcrypt from 'bcryptjs';
import type { Express } from 'express';
import { Redis } from 'ioredis';
import type { Knex } from 'knex';
import request from 'supertest';

export const TEST_PASSWORD = 'correct horse battery staple';
export const ROLES = ['admin', 'engineer', 'builder', 'analyst'] as const;
export type Role = (typeof ROLES)[number];

export interface TestMember {
  id: string;
  email: string;
  role: Role;
}

export interface TestWorkspace {
  id: string;
  name: string;
  members: Record<Role, TestMember>;
}

export interface TestContext {
  config: Config;
  knex: Knex;
  redis: Redis;
  /** A queue of this test file's own, so files never see each other's jobs. */
  queue: Queue;
  queueName: string;
  pulls: PullRunner;
  app: Express;
  close(): Promise<void>;
}

/**
 * The API on the real PostgreSQL and Redis named by DATABASE_URL and REDIS_URL (migrated already).
 * `env` overrides configuration for this file only.
 */
export function createTestContext(env: Record<string, string> = {}): TestContext {
  const config = loadConfig({ ...process.env, NODE_ENV: 'test', LOG_LEVEL: 'silent', ...env });
  const knex = createKnex(config.databaseUrl);
  const redis = new Redis(config.redisUrl, { maxRetriesPerRequest: null });
  const queueName = `sweep-chunks-test-${randomUUID()}`;
  const queue = new Queue(queueName, { connection: redis });
  const pulls = new PullRunner({ threads: config.pullThreads, timeLimitMs: config.pullTimeLimitMs });
  const app = createApp({ knex, queue, config, pulls });
  return {
    config,
    knex,
    redis,
    queue,
    queueName,
    pulls,
    app,
    async close() {
      await pulls.close();
      await queue.obliterate({ force: true });
      await queue.close();
      await redis.quit();
      await knex.destroy();
    },
  };
}

/** A workspace of its own with one member per role, e-mails unique to this run. */
export async function createWorkspace(knex: Knex, label: string): Promise<TestWorkspace> {
  const tag = randomUUID().slice(0, 8);
  const name = `Test shop ${label} ${tag}`;
  const [workspace] = await knex('workspaces').insert({ name, slug: `test-${label}-${tag}` }).returning<{ id: string }[]>('id');
  if (!workspace) throw new Error('workspace not created');
  const passwordHash = await bcrypt.hash(TEST_PASSWORD, 4);
  const members = {} as Record<Role, TestMember>;
  for (const role of ROLES) {
    const email = `${role}.${label}.${tag}@test.example`;
    const [row] = await knex('users')
      .insert({ workspace_id: workspace.id, email, password_hash: passwordHash, display_name: `Test ${role}`, role })
      .returning<{ id: string }[]>('id');
    if (!row) throw new Error('member not created');
    members[role] = { id: row.id, email, role };
  }
  return { id: workspace.id, name, members };
}

export async function signIn(app: Express, email: string, password = TEST_PASSWORD): Promise<string> {
  const response = await request(app).post('/api/auth/sign-in').send({ email, password });
  if (response.status !== 200) throw new Error(`sign-in as ${email} gave ${response.status}`);
  return (response.body as { token: string }).token;
}

/** Bearer tokens for every member of a workspace. */
export async function tokensFor(app: Express, workspace: TestWorkspace): Promise<Record<Role, string>> {
  const tokens = {} as Record<Role, string>;
  for (const role of ROLES) tokens[role] = await signIn(app, workspace.members[role].email);
  return tokens;
}

export async function deleteWorkspace(knex: Knex, workspace: TestWorkspace): Promise<void> {
  await knex('workspaces').where({ id: workspace.id }).delete();
}
