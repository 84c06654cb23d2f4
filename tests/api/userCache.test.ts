import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createKnex } from '../../server/db/knex';
import { upsertUser } from '../../server/services/authService';
import { userCacheState } from '../../server/auth/userCache';
import { User } from '../../server/models/User';
import { signIn, testContext, unique } from '../helpers/app';

/**
 * Signed-in users are kept in memory per API process (server/auth/userCache.ts). These tests make the changes the
 * way another process would (a plain UPDATE on another connection: no model hooks run here) and check that the
 * database's announcement still ends the kept entry, and that nothing is kept while the announcements are lost.
 */
const ctx = testContext();
const elsewhere = createKnex(ctx.config.databaseUrl, { max: 1 });

afterAll(async () => {
  await elsewhere.destroy();
  await ctx.close();
});

async function until(check: () => Promise<boolean> | boolean, what: string, timeoutMs = 15_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await check())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting until ${what}`);
    await new Promise((done) => setTimeout(done, 25));
  }
}

async function freshAnalyst() {
  const password = `pw-${unique()}`;
  const user = await upsertUser({ email: `${unique('cache-')}@quillfield.example`, name: 'Cache test analyst', role: 'analyst', password });
  const token = await signIn(ctx.app, { email: user.email, password });
  return { user, token, me: () => request(ctx.app).get('/api/auth/me').set('Authorization', `Bearer ${token}`) };
}

describe('signed-in users kept in memory', () => {
  beforeAll(async () => {
    const { me } = await freshAnalyst();
    await me(); // starts the listener
    await until(() => userCacheState().live, 'the LISTEN connection is up');
  });

  it('keeps a user after the first request and drops them when another process changes the row', async () => {
    const { user, me } = await freshAnalyst();
    expect((await me()).body.role).toBe('analyst');
    expect(userCacheState(user.id).kept).toBe(true);

    await elsewhere('users').where({ id: user.id }).update({ role: 'compliance' });
    await until(() => !userCacheState(user.id).kept, 'the announcement drops the entry');
    expect((await me()).body.role).toBe('compliance');

    await elsewhere('users').where({ id: user.id }).update({ active: false });
    await until(async () => (await me()).status === 401, 'the deactivated session is refused');
  });

  it('a change through the services in this process bites on the very next request', async () => {
    const { user, me } = await freshAnalyst();
    await me();
    expect(userCacheState(user.id).kept).toBe(true);
    const admin = await signIn(ctx.app, 'admin');
    const changed = await request(ctx.app).patch(`/api/users/${user.id}`).set('Authorization', `Bearer ${admin}`).send({ role: 'pm' });
    expect(changed.status).toBe(200);
    expect((await me()).body.role).toBe('pm'); // no waiting: the model's hook dropped the entry after commit
  });

  it('the User model drops kept users as soon as it changes one, before the commit announces it', async () => {
    const { user, me } = await freshAnalyst();
    await me();
    expect(userCacheState(user.id).kept).toBe(true);
    await User.transaction(async (trx) => {
      await User.query(trx).patch({ name: 'Renamed in a transaction' }).where({ id: user.id });
      // Not committed yet, so no announcement can have arrived: only the model's hook can have dropped the entry.
      expect(userCacheState(user.id).kept).toBe(false);
      await me(); // reads the committed row (the old name) on another connection...
    });
    // ...and the commit's second drop (and the announcement) keep that old row from being served afterwards.
    expect(userCacheState(user.id).kept).toBe(false);
    expect((await me()).body.name).toBe('Renamed in a transaction');
  });

  it('keeps nothing while the announcements are lost, and resumes once they are back', async () => {
    const { user, me } = await freshAnalyst();
    await me();
    // End this process's LISTEN connection from the server side, as a restart or a network cut would.
    await elsewhere.raw(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE application_name = ?`, [`loadline-listen loadline_user_changed ${process.pid}`]);
    await until(() => !userCacheState().live, 'the loss is noticed');
    expect(userCacheState(user.id).kept).toBe(false);
    expect((await me()).status).toBe(200);
    expect(userCacheState(user.id).kept).toBe(false); // read from the database, not kept
    await until(() => userCacheState().live, 'the listener reconnects');
    await me();
    expect(userCacheState(user.id).kept).toBe(true);
  });
});
