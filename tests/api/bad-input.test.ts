import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, signIn, unique, demoUser } from '../helpers/app';
import { testMailSink, waitForMail } from '../helpers/mail';
import { createApp } from '../../server/app';
import { upsertUser } from '../../server/services/authService';
import { DEMO_USERS } from '../../server/demo/users';

/** Text that would change a query if it were ever spliced into SQL. */
const SQL_PAYLOADS = [`'; DROP TABLE users; --`, `" OR 1=1`, `x' OR '1'='1'; DELETE FROM audit_events; --`];

const base = testContext();
let sink: Awaited<ReturnType<typeof testMailSink>>;
let app: ReturnType<typeof createApp>;
let admin: string;
let analyst: string;
let demoBefore: unknown[];

/** The demo users' stored identity (not their sign-in times, which parallel tests move). */
async function demoIdentity() {
  return base.knex('users').select('id', 'email', 'name', 'role', 'active', 'password_hash').whereIn('email', DEMO_USERS.map((u) => u.email)).orderBy('id');
}

beforeAll(async () => {
  sink = await testMailSink(base.knex);
  // Generous rate limits: this file is about input, not throttling.
  const rateLimits = { ...base.config.rateLimits, signInFailuresPerIp: 1000, signInFailuresPerAccount: 1000, passwordResetsPerIp: 1000, passwordResetsPerAccount: 1000 };
  app = createApp({ ...base.config, smtpUrl: sink.smtpUrl, rateLimits }, { serveClient: false });
  admin = await signIn(app, 'admin');
  analyst = await signIn(app, 'analyst');
  demoBefore = await demoIdentity();
});
afterAll(async () => {
  await sink.close();
  await base.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

/** Every JSON-body route of the foundation, with a caller allowed to use it. */
const BODY_ROUTES: { method: 'post' | 'patch'; path: string; who: 'admin' | 'analyst' | null; required: string[] }[] = [
  { method: 'post', path: '/api/auth/sign-in', who: null, required: ['email', 'password'] },
  { method: 'post', path: '/api/auth/password', who: 'analyst', required: ['currentPassword', 'newPassword'] },
  { method: 'post', path: '/api/auth/password-reset', who: null, required: ['email'] },
  { method: 'post', path: '/api/auth/password-link', who: null, required: ['token'] },
  { method: 'post', path: '/api/auth/set-password', who: null, required: ['token', 'password'] },
  { method: 'post', path: '/api/users', who: 'admin', required: ['email', 'name', 'role'] },
  { method: 'patch', path: '/api/users/1', who: 'admin', required: [] },
  { method: 'post', path: '/api/tokens', who: 'analyst', required: ['name'] },
];

function call(method: 'post' | 'patch', path: string, who: 'admin' | 'analyst' | null) {
  const req = request(app)[method](path);
  return who ? req.set(bearer(who === 'admin' ? admin : analyst)) : req;
}

describe('malformed, incomplete and oversized bodies', () => {
  for (const route of BODY_ROUTES) {
    it(`${route.method.toUpperCase()} ${route.path}: malformed JSON → 400`, async () => {
      const res = await call(route.method, route.path, route.who).set('Content-Type', 'application/json').send('{"email": "a@b.example", "name": ');
      expect(res.status).toBe(400);
      expect(res.body.error).toBe('The request body is not valid JSON');
    });

    it(`${route.method.toUpperCase()} ${route.path}: body over 1 MB → 413`, async () => {
      const res = await call(route.method, route.path, route.who).set('Content-Type', 'application/json').send(JSON.stringify({ name: 'x'.repeat(1_100_000) }));
      expect(res.status).toBe(413);
      expect(res.body.error).toBe('The request body is too large');
    });

    if (route.required.length) {
      it(`${route.method.toUpperCase()} ${route.path}: missing fields → 422 naming each`, async () => {
        const res = await call(route.method, route.path, route.who).send({});
        expect(res.status).toBe(422);
        expect(res.body.issues.map((i: { path: string }) => i.path).sort()).toEqual([...route.required].sort());
      });
    }
  }

  it('a JSON array instead of an object → 422; a bare JSON string → 400 (only objects and arrays are accepted)', async () => {
    expect((await call('post', '/api/users', 'admin').send([1, 2])).status).toBe(422);
    expect((await call('post', '/api/tokens', 'analyst').set('Content-Type', 'application/json').send('"just text"')).status).toBe(400);
  });
});

describe('SQL meta-characters in every text field: a clear 4xx or the literal stored, nothing else changed', () => {
  for (const payload of SQL_PAYLOADS) {
    it(`sign-in, reset, link and set-password refuse ${JSON.stringify(payload)}`, async () => {
      expect((await request(app).post('/api/auth/sign-in').send({ email: payload, password: payload })).status).toBe(401);
      expect((await request(app).post('/api/auth/sign-in').send({ email: demoUser('admin').email, password: payload })).status).toBe(401);
      const reset = await request(app).post('/api/auth/password-reset').send({ email: payload });
      expect(reset.status).toBe(422);
      expect(reset.body.issues[0].path).toBe('email');
      expect((await request(app).post('/api/auth/password-link').send({ token: payload })).status).toBe(400);
      const set = await request(app).post('/api/auth/set-password').send({ token: payload, password: `${payload}-long-enough` });
      expect(set.status).toBe(400);
    });

    it(`invitations take ${JSON.stringify(payload)} as a literal name and refuse it as e-mail or role`, async () => {
      const badEmail = await request(app).post('/api/users').set(bearer(admin)).send({ email: payload, name: 'x', role: 'pm' });
      expect(badEmail.status).toBe(422);
      expect(badEmail.body.issues.map((i: { path: string }) => i.path)).toEqual(['email']);

      const roleEmail = `${unique('sqlrole')}@quillfield.example`;
      const badRole = await request(app).post('/api/users').set(bearer(admin)).send({ email: roleEmail, name: 'x', role: payload });
      expect(badRole.status).toBe(422);
      expect(badRole.body.issues.map((i: { path: string }) => i.path)).toEqual(['role']);
      expect(await base.knex('users').where({ email: roleEmail })).toHaveLength(0);

      const email = `${unique('sqlname')}@quillfield.example`;
      const stored = await request(app).post('/api/users').set(bearer(admin)).send({ email, name: payload, role: 'pm' });
      expect(stored.status).toBe(201);
      expect(stored.body.name).toBe(payload);
      expect((await base.knex('users').where({ id: stored.body.id }).first()).name).toBe(payload);
      await waitForMail(base.knex, email);
    });

    it(`user changes take ${JSON.stringify(payload)} as a literal name and refuse it as role or id`, async () => {
      const user = await upsertUser({ email: `${unique('sqlpatch')}@quillfield.example`, name: 'Before', role: 'analyst', password: 'fixture-pass-1' });
      const renamed = await request(app).patch(`/api/users/${user.id}`).set(bearer(admin)).send({ name: payload });
      expect(renamed.status).toBe(200);
      expect((await base.knex('users').where({ id: user.id }).first()).name).toBe(payload);
      const badRole = await request(app).patch(`/api/users/${user.id}`).set(bearer(admin)).send({ role: payload });
      expect(badRole.status).toBe(422);
      expect(badRole.body.issues[0].path).toBe('role');
      expect((await base.knex('users').where({ id: user.id }).first()).role).toBe('analyst');
      const badId = await request(app).patch(`/api/users/${encodeURIComponent(payload)}`).set(bearer(admin)).send({ name: 'y' });
      expect(badId.status).toBe(422);
      expect(badId.body.issues[0].path).toBe('id');
      expect((await request(app).post(`/api/users/${encodeURIComponent(payload)}/invitation`).set(bearer(admin))).status).toBe(422);
    });

    it(`API tokens take ${JSON.stringify(payload)} as a literal name and refuse it as id`, async () => {
      const created = await request(app).post('/api/tokens').set(bearer(analyst)).send({ name: payload });
      expect(created.status).toBe(201);
      expect((await base.knex('api_tokens').where({ id: created.body.token.id }).first()).name).toBe(payload);
      const list = await request(app).get('/api/tokens').set(bearer(analyst));
      expect(list.body.items.find((t: { id: number }) => t.id === created.body.token.id).name).toBe(payload);
      expect((await request(app).delete(`/api/tokens/${encodeURIComponent(payload)}`).set(bearer(analyst))).status).toBe(422);
      await request(app).delete(`/api/tokens/${created.body.token.id}`).set(bearer(analyst));
    });

    it(`password change refuses ${JSON.stringify(payload)} as the current password and stores it literally as a new one`, async () => {
      const email = `${unique('sqlpw')}@quillfield.example`;
      await upsertUser({ email, name: 'Pw Person', role: 'pm', password: 'fixture-pass-1' });
      const token = await signIn(app, { email, password: 'fixture-pass-1' });
      const wrong = await request(app).post('/api/auth/password').set(bearer(token)).send({ currentPassword: payload, newPassword: 'another-pass-2' });
      expect(wrong.status).toBe(422);
      expect(wrong.body.issues[0].path).toBe('currentPassword');
      const newPassword = payload.padEnd(12, '#');
      const changed = await request(app).post('/api/auth/password').set(bearer(token)).send({ currentPassword: 'fixture-pass-1', newPassword });
      expect(changed.status).toBe(200);
      await signIn(app, { email, password: newPassword });
    });

    it(`audit and outbox filters treat ${JSON.stringify(payload)} as plain text`, async () => {
      const filters = { actor: payload, action: payload, objectType: payload, objectId: payload };
      const page = await request(app).get('/api/audit').query(filters).set(bearer(admin));
      expect(page.status).toBe(200);
      expect(page.body.total).toBe(0);
      const csv = await request(app).get('/api/audit/export.csv').query(filters).set(bearer(admin));
      expect(csv.status).toBe(200);
      expect(csv.text.trim()).toBe('id,at,actor_id,actor_email,action,object_type,object_id,ip,details');
      const badDate = await request(app).get('/api/audit').query({ from: payload, to: payload }).set(bearer(admin));
      expect(badDate.status).toBe(422);
      expect(badDate.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['from', 'to']);
      const outbox = await request(app).get('/api/outbox').query({ to: payload }).set(bearer(admin));
      expect(outbox.status).toBe(200);
      expect(outbox.body.total).toBe(0);
      expect((await request(app).get(`/api/outbox/${encodeURIComponent(payload)}`).set(bearer(admin))).status).toBe(422);
    });
  }

  it('left the tables and the demo users as they were', async () => {
    for (const table of ['users', 'api_tokens', 'audit_events', 'password_links', 'outbox_messages']) {
      expect(await base.knex.schema.hasTable(table), table).toBe(true);
    }
    expect(await demoIdentity()).toEqual(demoBefore);
    expect(Number((await base.knex('audit_events').count({ n: '*' }).first())!.n)).toBeGreaterThan(0);
  });
});
