import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, signIn, unique, demoUser } from '../helpers/app';
import { testMailSink, waitForMail, linkToken } from '../helpers/mail';
import { createApp } from '../../server/app';
import { upsertUser } from '../../server/services/authService';

const base = testContext();
let sink: Awaited<ReturnType<typeof testMailSink>>;
let app: ReturnType<typeof createApp>;
let admin: string;
let adminId: number;

beforeAll(async () => {
  sink = await testMailSink(base.knex);
  app = createApp({ ...base.config, smtpUrl: sink.smtpUrl }, { serveClient: false });
  admin = await signIn(app, 'admin');
  adminId = (await base.knex('users').whereRaw('lower(email) = ?', [demoUser('admin').email]).first()).id;
});
afterAll(async () => {
  await sink.close();
  await base.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

async function freshUser(role: 'analyst' | 'pm' | 'compliance' = 'analyst') {
  const email = `${unique('usr')}@quillfield.example`;
  const password = `pw-${unique()}`;
  const user = await upsertUser({ email, name: 'Fixture Person', role, password });
  return { id: user.id, email, password };
}

describe('users admin', () => {
  it('lists every user for the grid, never a password hash', async () => {
    const res = await request(app).get('/api/users').set(bearer(admin));
    expect(res.status).toBe(200);
    const emails = res.body.items.map((u: { email: string }) => u.email);
    for (const role of ['admin', 'analyst', 'pm', 'compliance'] as const) expect(emails).toContain(demoUser(role).email);
    expect(res.body.items[0]).toEqual({
      id: expect.any(Number),
      email: expect.any(String),
      name: expect.any(String),
      role: expect.any(String),
      active: expect.any(Boolean),
      status: expect.stringMatching(/^(active|invited|deactivated)$/),
      lastSignInAt: expect.toSatisfy((v: unknown) => v === null || typeof v === 'string'),
      createdAt: expect.any(String),
      updatedAt: expect.any(String),
    });
    expect(JSON.stringify(res.body)).not.toMatch(/\$2[aby]\$/);
  });

  it('invites a user (stored without a password, mailed, audited) and refuses a duplicate e-mail in any case', async () => {
    const email = `${unique('Invited')}@Quillfield.example`;
    const res = await request(app).post('/api/users').set(bearer(admin)).send({ email, name: '  Petra Voss  ', role: 'compliance' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ email, name: 'Petra Voss', role: 'compliance', status: 'invited', active: true, lastSignInAt: null });
    const row = await base.knex('users').where({ id: res.body.id }).first();
    expect(row.password_hash).toBeNull();
    await waitForMail(base.knex, email);
    const audit = await base.knex('audit_events').where({ action: 'user.invited', object_id: String(res.body.id) }).first();
    expect(audit).toMatchObject({ actor_id: adminId, object_type: 'user' });
    expect(audit.details).toMatchObject({ email, role: 'compliance' });

    const dup = await request(app).post('/api/users').set(bearer(admin)).send({ email: email.toLowerCase(), name: 'Other', role: 'pm' });
    expect(dup.status).toBe(409);
    expect(dup.body.issues).toEqual([{ path: 'email', message: 'is already taken' }]);
    expect(await base.knex('users').whereRaw('lower(email) = lower(?)', [email])).toHaveLength(1);
  });

  it('changes a role with immediate effect on the existing session, and audits from/to', async () => {
    const user = await freshUser('analyst');
    const session = await signIn(app, user);
    expect((await request(app).get('/api/audit').set(bearer(session))).status).toBe(403);
    const res = await request(app).patch(`/api/users/${user.id}`).set(bearer(admin)).send({ role: 'compliance' });
    expect(res.status).toBe(200);
    expect(res.body.role).toBe('compliance');
    expect((await request(app).get('/api/audit').set(bearer(session))).status).toBe(200);
    const audit = await base.knex('audit_events').where({ action: 'user.role-changed', object_id: String(user.id) }).first();
    expect(audit.details).toMatchObject({ from: 'analyst', to: 'compliance' });
  });

  it('deactivation ends sessions and API tokens at once; reactivation needs a fresh sign-in', async () => {
    const user = await freshUser('pm');
    const session = await signIn(app, user);
    const token = await request(app).post('/api/tokens').set(bearer(session)).send({ name: 'pm script' });
    expect((await request(app).get('/api/auth/me').set(bearer(token.body.secret))).status).toBe(200);

    const off = await request(app).patch(`/api/users/${user.id}`).set(bearer(admin)).send({ active: false });
    expect(off.status).toBe(200);
    expect(off.body).toMatchObject({ active: false, status: 'deactivated' });
    expect((await request(app).get('/api/auth/me').set(bearer(session))).status).toBe(401);
    expect((await request(app).get('/api/auth/me').set(bearer(token.body.secret))).status).toBe(401);
    expect((await request(app).post('/api/auth/sign-in').send({ email: user.email, password: user.password })).status).toBe(401);

    const on = await request(app).patch(`/api/users/${user.id}`).set(bearer(admin)).send({ active: true });
    expect(on.body.status).toBe('active');
    // The old session stays dead (sessions_valid_after moved); a new sign-in works.
    expect((await request(app).get('/api/auth/me').set(bearer(session))).status).toBe(401);
    await signIn(app, user);
    const actions = (await base.knex('audit_events').where({ object_type: 'user', object_id: String(user.id) }).orderBy('id')).map((e) => e.action);
    expect(actions).toEqual(expect.arrayContaining(['user.deactivated', 'user.reactivated']));
  });

  it('deactivation also voids an outstanding invitation link, even after reactivation', async () => {
    const email = `${unique('voided')}@quillfield.example`;
    const invited = await request(app).post('/api/users').set(bearer(admin)).send({ email, name: 'Lee Voided', role: 'pm' });
    const [mail] = await waitForMail(base.knex, email);
    const secret = linkToken(mail.text);
    expect((await request(app).post('/api/auth/password-link').send({ token: secret })).status).toBe(200);
    await request(app).patch(`/api/users/${invited.body.id}`).set(bearer(admin)).send({ active: false });
    expect((await request(app).post('/api/auth/password-link').send({ token: secret })).status).toBe(400);
    await request(app).patch(`/api/users/${invited.body.id}`).set(bearer(admin)).send({ active: true });
    expect((await request(app).post('/api/auth/set-password').send({ token: secret, password: 'lee-tries-this' })).status).toBe(400);
  });

  it('renames, and answers 404 for an unknown user and 422 for an empty change', async () => {
    const user = await freshUser();
    const renamed = await request(app).patch(`/api/users/${user.id}`).set(bearer(admin)).send({ name: 'Renamed Person' });
    expect(renamed.body.name).toBe('Renamed Person');
    expect((await request(app).patch('/api/users/999999999').set(bearer(admin)).send({ name: 'x' })).status).toBe(404);
    const empty = await request(app).patch(`/api/users/${user.id}`).set(bearer(admin)).send({});
    expect(empty.status).toBe(422);
    expect(empty.body.issues[0].message).toBe('give name, role or active');
  });

  it('an admin cannot deactivate or demote themselves', async () => {
    const self = await request(app).patch(`/api/users/${adminId}`).set(bearer(admin)).send({ active: false });
    expect(self.status).toBe(409);
    expect(self.body.issues[0].path).toBe('active');
    const demote = await request(app).patch(`/api/users/${adminId}`).set(bearer(admin)).send({ role: 'pm' });
    expect(demote.status).toBe(409);
    const row = await base.knex('users').where({ id: adminId }).first();
    expect(row).toMatchObject({ active: true, role: 'admin' });
  });

  it('names every invalid field of an invitation', async () => {
    const res = await request(app).post('/api/users').set(bearer(admin)).send({ email: 'not-an-address', name: '', role: 'trader' });
    expect(res.status).toBe(422);
    expect(res.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['email', 'name', 'role']);
  });
});
