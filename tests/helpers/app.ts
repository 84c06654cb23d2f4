import type { Knex } from 'knex';
import request from 'supertest';
import { loadConfig, type Config } from '../../server/config';
import { createKnex, bindModels } from '../../server/db/knex';
import { createApp } from '../../server/app';
import { DEMO_USERS } from '../../server/demo/users';
import type { Role } from '../../shared/schemas/common';

/**
 * The real app over the real test database (npm test prepares it: fresh, migrated, demo seeded).
 * One per test file: call in beforeAll, close in afterAll.
 */
export function testContext(overrides: Partial<Config> = {}) {
  const config = { ...loadConfig(), ...overrides };
  const knex: Knex = createKnex(config.databaseUrl, { max: 5 });
  bindModels(knex);
  const app = createApp(config, { serveClient: false });
  return { config, knex, app, close: () => knex.destroy() };
}

export function demoUser(role: Role) {
  const user = DEMO_USERS.find((u) => u.role === role);
  if (!user) throw new Error(`no demo user for ${role}`);
  return user;
}

/** Signs in a demo user (or the given credentials) and answers its Bearer token. */
export async function signIn(app: ReturnType<typeof createApp>, who: Role | { email: string; password: string }): Promise<string> {
  const creds = typeof who === 'string' ? demoUser(who) : who;
  const res = await request(app).post('/api/auth/sign-in').send({ email: creds.email, password: creds.password });
  if (res.status !== 200) throw new Error(`sign-in of ${creds.email} failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.token as string;
}

/** A short unique suffix so parallel test files never collide on names, e-mails or symbols. */
export function unique(prefix = 't'): string {
  return `${prefix}${Date.now().toString(36)}${Math.floor(Math.random() * 1e6).toString(36)}`;
}
