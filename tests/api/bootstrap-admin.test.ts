import { afterAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, signIn, unique } from '../helpers/app';
import { ensureAdminFromEnv } from '../../server/services/bootstrapAdmin';

const ctx = testContext();
afterAll(() => ctx.close());

describe('first admin from LOADLINE_ADMIN_EMAIL / LOADLINE_ADMIN_PASSWORD', () => {
  it('creates the admin, keeps sessions across restarts, and a new password ends them', async () => {
    const email = `${unique('boot')}@quillfield.example`;
    await ensureAdminFromEnv({ LOADLINE_ADMIN_EMAIL: email, LOADLINE_ADMIN_PASSWORD: 'first-admin-pass' });
    const session = await signIn(ctx.app, { email, password: 'first-admin-pass' });
    expect((await request(ctx.app).get('/api/users').set('Authorization', `Bearer ${session}`)).status).toBe(200);

    // A restart with the same settings changes nothing.
    await ensureAdminFromEnv({ LOADLINE_ADMIN_EMAIL: email, LOADLINE_ADMIN_PASSWORD: 'first-admin-pass' });
    expect((await request(ctx.app).get('/api/auth/me').set('Authorization', `Bearer ${session}`)).status).toBe(200);

    // A new password (e.g. a forgotten one reset through the environment) ends the earlier sessions.
    await ensureAdminFromEnv({ LOADLINE_ADMIN_EMAIL: email.toUpperCase(), LOADLINE_ADMIN_PASSWORD: 'second-admin-pass' });
    expect((await request(ctx.app).get('/api/auth/me').set('Authorization', `Bearer ${session}`)).status).toBe(401);
    await signIn(ctx.app, { email, password: 'second-admin-pass' });
    expect(await ctx.knex('users').whereRaw('lower(email) = lower(?)', [email])).toHaveLength(1);
  });

  it('refuses a short password', async () => {
    await expect(ensureAdminFromEnv({ LOADLINE_ADMIN_EMAIL: `${unique('boot')}@quillfield.example`, LOADLINE_ADMIN_PASSWORD: 'short' })).rejects.toThrow(/at least 10 characters/);
  });
});
