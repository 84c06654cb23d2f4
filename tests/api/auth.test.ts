import { afterAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, demoUser, signIn, unique } from '../helpers/app';
import { upsertUser } from '../../server/services/authService';
import { SESSION_COOKIE } from '../../server/auth/passport';
import { createApp } from '../../server/app';
import type { Config } from '../../server/config';

const ctx = testContext();
afterAll(() => ctx.close());

/** A second app over the same database with other settings (its own rate-limit counters). */
function appWith(overrides: Partial<Config>) {
  return createApp({ ...ctx.config, ...overrides }, { serveClient: false });
}

/** A throwaway user of our own, so nothing here disturbs the demo users other test files sign in as. */
async function freshUser(role: 'analyst' | 'pm' = 'analyst') {
  const email = `${unique('auth')}@quillfield.example`;
  const password = `pw-${unique()}`;
  const user = await upsertUser({ email, name: 'Test Person', role, password });
  return { id: user.id, email, password };
}

function cookieHeader(res: request.Response): string[] {
  const raw = res.headers['set-cookie'] as unknown as string[] | string | undefined;
  return raw === undefined ? [] : Array.isArray(raw) ? raw : [raw];
}

describe('sign-in', () => {
  it('answers the token and user and sets an httpOnly SameSite=Strict cookie', async () => {
    const who = demoUser('pm');
    const res = await request(ctx.app).post('/api/auth/sign-in').send({ email: who.email, password: who.password });
    expect(res.status).toBe(200);
    expect(res.body.user).toEqual({ id: expect.any(Number), email: who.email, name: who.name, role: 'pm' });
    expect(res.body.token).toMatch(/^[\w-]+\.[\w-]+\.[\w-]+$/);
    const cookie = cookieHeader(res).find((c) => c.startsWith(`${SESSION_COOKIE}=`));
    expect(cookie).toBeDefined();
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Strict/i);
    // The cookie alone (a browser) and the Bearer token alone (a script) both work.
    const byCookie = await request(ctx.app).get('/api/auth/me').set('Cookie', cookie!.split(';')[0]);
    expect(byCookie.status).toBe(200);
    expect(byCookie.body.email).toBe(who.email);
    const byBearer = await request(ctx.app).get('/api/auth/me').set('Authorization', `Bearer ${res.body.token}`);
    expect(byBearer.body.role).toBe('pm');
  });

  it('treats the e-mail case-insensitively', async () => {
    const who = demoUser('compliance');
    const res = await request(ctx.app).post('/api/auth/sign-in').send({ email: who.email.toUpperCase(), password: who.password });
    expect(res.status).toBe(200);
  });

  it('answers the same generic 401 for a wrong password and an unknown user, and audits both', async () => {
    const user = await freshUser();
    const wrong = await request(ctx.app).post('/api/auth/sign-in').send({ email: user.email, password: 'not-the-password' });
    const unknownEmail = `${unique('nobody')}@quillfield.example`;
    const unknown = await request(ctx.app).post('/api/auth/sign-in').send({ email: unknownEmail, password: 'whatever-it-is' });
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body).toEqual(unknown.body);
    expect(wrong.body.error).toBe('E-mail or password is not correct');
    const failures = await ctx.knex('audit_events').where({ action: 'auth.sign-in-failed' }).whereRaw(`details->>'email' in (?, ?)`, [user.email, unknownEmail]);
    expect(failures).toHaveLength(2);
    expect(failures.find((f) => f.details.email === user.email).actor_id).toBe(user.id);
    expect(failures.find((f) => f.details.email === unknownEmail).actor_id).toBeNull();
  });

  it('audits a successful sign-in and records the last sign-in time', async () => {
    const user = await freshUser();
    await signIn(ctx.app, user);
    const row = await ctx.knex('users').where({ id: user.id }).first();
    expect(row.last_sign_in_at).not.toBeNull();
    const events = await ctx.knex('audit_events').where({ action: 'auth.sign-in', actor_id: user.id });
    expect(events).toHaveLength(1);
    expect(events[0].ip).toMatch(/127\.0\.0\.1|::1/);
  });

  it('refuses a deactivated user with the same generic 401', async () => {
    const user = await freshUser();
    await ctx.knex('users').where({ id: user.id }).update({ active: false });
    const res = await request(ctx.app).post('/api/auth/sign-in').send({ email: user.email, password: user.password });
    expect(res.status).toBe(401);
    expect(res.body.error).toBe('E-mail or password is not correct');
  });
});

describe('sign-in rate limits', () => {
  it('blocks an account after too many failures, even with the right password, with a clear 429', async () => {
    const limited = appWith({ rateLimits: { ...ctx.config.rateLimits, signInFailuresPerAccount: 3, signInFailuresPerIp: 100 } });
    const user = await freshUser();
    const other = await freshUser();
    for (let i = 0; i < 3; i++) {
      const res = await request(limited).post('/api/auth/sign-in').send({ email: user.email, password: `wrong-${i}` });
      expect(res.status).toBe(401);
    }
    // The key is the e-mail, whatever its case or surrounding spaces.
    const blocked = await request(limited).post('/api/auth/sign-in').send({ email: ` ${user.email.toUpperCase()} `, password: user.password });
    expect(blocked.status).toBe(429);
    expect(blocked.body.error).toMatch(/Too many failed sign-ins for this account: try again in \d+ minutes/);
    expect(blocked.headers['retry-after']).toBeDefined();
    // Another account from the same address is not affected.
    expect((await request(limited).post('/api/auth/sign-in').send({ email: other.email, password: other.password })).status).toBe(200);
    // Refused again; the trail records the first refusal of the window only.
    expect((await request(limited).post('/api/auth/sign-in').send({ email: user.email, password: user.password })).status).toBe(429);
    const throttled = await ctx.knex('audit_events').where({ action: 'auth.sign-in-throttled' }).whereRaw(`details->>'email' = ?`, [user.email.toLowerCase()]);
    expect(throttled).toHaveLength(1);
    expect(throttled[0].details.scope).toBe('account');
  });

  it('blocks a client address after too many failures across accounts, and successes do not count', async () => {
    const limited = appWith({ rateLimits: { ...ctx.config.rateLimits, signInFailuresPerAccount: 100, signInFailuresPerIp: 4 } });
    const user = await freshUser();
    // Successful sign-ins never lock anyone out.
    for (let i = 0; i < 6; i++) expect((await request(limited).post('/api/auth/sign-in').send({ email: user.email, password: user.password })).status).toBe(200);
    for (let i = 0; i < 4; i++) {
      const res = await request(limited).post('/api/auth/sign-in').send({ email: `${unique('spray')}@quillfield.example`, password: 'guess-guess' });
      expect(res.status).toBe(401);
    }
    const blocked = await request(limited).post('/api/auth/sign-in').send({ email: user.email, password: user.password });
    expect(blocked.status).toBe(429);
    expect(blocked.body.error).toMatch(/Too many failed sign-ins from this address/);
  });
});

describe('sessions', () => {
  it('expire after the configured lifetime', async () => {
    const shortLived = appWith({ sessionTtlSeconds: 1 });
    const user = await freshUser();
    const token = await signIn(shortLived, user);
    expect((await request(shortLived).get('/api/auth/me').set('Authorization', `Bearer ${token}`)).status).toBe(200);
    await new Promise((resolve) => setTimeout(resolve, 2100));
    expect((await request(shortLived).get('/api/auth/me').set('Authorization', `Bearer ${token}`)).status).toBe(401);
  });

  it('sign-out clears the cookie', async () => {
    const user = await freshUser();
    const signedIn = await request(ctx.app).post('/api/auth/sign-in').send({ email: user.email, password: user.password });
    const cookie = cookieHeader(signedIn).find((c) => c.startsWith(`${SESSION_COOKIE}=`))!.split(';')[0];
    const out = await request(ctx.app).post('/api/auth/sign-out').set('Cookie', cookie);
    expect(out.status).toBe(200);
    const cleared = cookieHeader(out).find((c) => c.startsWith(`${SESSION_COOKIE}=`));
    expect(cleared).toMatch(/^loadline_session=;/);
    expect(cleared).toMatch(/Expires=Thu, 01 Jan 1970/);
    expect(await ctx.knex('audit_events').where({ action: 'auth.sign-out', actor_id: user.id })).toHaveLength(1);
  });

  it('rejects a forged or tampered token', async () => {
    const token = await signIn(ctx.app, 'analyst');
    const [head, , sig] = token.split('.');
    const forgedPayload = Buffer.from(JSON.stringify({ sub: '1', role: 'admin', iat: Math.floor(Date.now() / 1000) })).toString('base64url');
    expect((await request(ctx.app).get('/api/users').set('Authorization', `Bearer ${head}.${forgedPayload}.${sig}`)).status).toBe(401);
  });
});

describe('changing your own password', () => {
  it('ends the earlier sessions at once and answers a fresh one', async () => {
    const user = await freshUser();
    const before = await signIn(ctx.app, user);
    const otherDevice = await signIn(ctx.app, user);
    const newPassword = `new-${unique()}-pass`;
    const res = await request(ctx.app).post('/api/auth/password').set('Authorization', `Bearer ${before}`).send({ currentPassword: user.password, newPassword });
    expect(res.status).toBe(200);
    expect(res.body.user.email).toBe(user.email);
    expect((await request(ctx.app).get('/api/auth/me').set('Authorization', `Bearer ${before}`)).status).toBe(401);
    expect((await request(ctx.app).get('/api/auth/me').set('Authorization', `Bearer ${otherDevice}`)).status).toBe(401);
    expect((await request(ctx.app).get('/api/auth/me').set('Authorization', `Bearer ${res.body.token}`)).status).toBe(200);
    expect((await request(ctx.app).post('/api/auth/sign-in').send({ email: user.email, password: user.password })).status).toBe(401);
    await signIn(ctx.app, { email: user.email, password: newPassword });
    expect(await ctx.knex('audit_events').where({ action: 'user.password-changed', object_id: String(user.id) })).toHaveLength(1);
  });

  it('refuses a wrong current password (naming the field) and a short new one', async () => {
    const user = await freshUser();
    const token = await signIn(ctx.app, user);
    const wrong = await request(ctx.app).post('/api/auth/password').set('Authorization', `Bearer ${token}`).send({ currentPassword: 'nope-nope', newPassword: 'long-enough-pass' });
    expect(wrong.status).toBe(422);
    expect(wrong.body.issues).toEqual([{ path: 'currentPassword', message: 'is not correct' }]);
    const short = await request(ctx.app).post('/api/auth/password').set('Authorization', `Bearer ${token}`).send({ currentPassword: user.password, newPassword: 'short' });
    expect(short.status).toBe(422);
    expect(short.body.issues[0].path).toBe('newPassword');
    // Nothing changed: the old password still works and the session lives.
    expect((await request(ctx.app).get('/api/auth/me').set('Authorization', `Bearer ${token}`)).status).toBe(200);
    await signIn(ctx.app, user);
  });
});
