import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, signIn, unique } from '../helpers/app';
import { upsertUser } from '../../server/services/authService';

const ctx = testContext();
let owner: { id: number; email: string; password: string };
let session: string;

beforeAll(async () => {
  const email = `${unique('tok')}@quillfield.example`;
  const password = `pw-${unique()}`;
  const user = await upsertUser({ email, name: 'Token Owner', role: 'analyst', password });
  owner = { id: user.id, email, password };
  session = await signIn(ctx.app, owner);
});
afterAll(() => ctx.close());

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

async function create(name: string, extra: Record<string, unknown> = {}) {
  const res = await request(ctx.app).post('/api/tokens').set(bearer(session)).send({ name, ...extra });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body as { token: { id: number; name: string; prefix: string; status: string; expiresAt: string | null }; secret: string };
}

describe('named API tokens', () => {
  it('shows the secret once, stores only its SHA-256, and lists prefix, name and dates', async () => {
    const name = `nightly import ${unique()}`;
    const created = await create(name);
    expect(created.secret).toMatch(/^llt_[\w-]{30,}$/);
    expect(created.token).toMatchObject({ name, status: 'active', expiresAt: null, prefix: created.secret.slice(0, 12) });
    const row = await ctx.knex('api_tokens').where({ id: created.token.id }).first();
    expect(row.token_hash).toBe(createHash('sha256').update(created.secret).digest('hex'));
    expect(JSON.stringify(row)).not.toContain(created.secret);

    const list = await request(ctx.app).get('/api/tokens').set(bearer(session));
    expect(list.status).toBe(200);
    const listed = list.body.items.find((t: { id: number }) => t.id === created.token.id);
    expect(listed).toEqual({
      id: created.token.id,
      name,
      prefix: created.token.prefix,
      status: 'active',
      createdAt: expect.any(String),
      lastUsedAt: null,
      expiresAt: null,
      revokedAt: null,
    });
    expect(JSON.stringify(list.body)).not.toContain(created.secret);
    expect(JSON.stringify(list.body)).not.toContain(row.token_hash);
    expect(await ctx.knex('audit_events').where({ action: 'token.created', object_id: String(created.token.id), actor_id: owner.id })).toHaveLength(1);
  });

  it('authenticates scripts and records when it was last used', async () => {
    const created = await create(`script ${unique()}`);
    const me = await request(ctx.app).get('/api/auth/me').set(bearer(created.secret));
    expect(me.status).toBe(200);
    expect(me.body.email).toBe(owner.email);
    const row = await ctx.knex('api_tokens').where({ id: created.token.id }).first();
    expect(row.last_used_at).not.toBeNull();
  });

  it('stops working at once when revoked, and revoking is audited', async () => {
    const created = await create(`revoke me ${unique()}`);
    expect((await request(ctx.app).get('/api/auth/me').set(bearer(created.secret))).status).toBe(200);
    const revoked = await request(ctx.app).delete(`/api/tokens/${created.token.id}`).set(bearer(session));
    expect(revoked.status).toBe(200);
    expect(revoked.body.status).toBe('revoked');
    expect((await request(ctx.app).get('/api/auth/me').set(bearer(created.secret))).status).toBe(401);
    expect(await ctx.knex('audit_events').where({ action: 'token.revoked', object_id: String(created.token.id) })).toHaveLength(1);
  });

  it('expires', async () => {
    const created = await create(`short ${unique()}`, { expiresInDays: 1 });
    expect(Date.parse(created.token.expiresAt!) - Date.now()).toBeGreaterThan(86_000_000);
    // Move the expiry into the past, as if the day had gone by.
    await ctx.knex('api_tokens').where({ id: created.token.id }).update({ expires_at: new Date(Date.now() - 1000) });
    expect((await request(ctx.app).get('/api/auth/me').set(bearer(created.secret))).status).toBe(401);
    const list = await request(ctx.app).get('/api/tokens').set(bearer(session));
    expect(list.body.items.find((t: { id: number }) => t.id === created.token.id).status).toBe('expired');
  });

  it("lists and revokes only the caller's own tokens", async () => {
    const created = await create(`private ${unique()}`);
    const other = await signIn(ctx.app, 'pm');
    const list = await request(ctx.app).get('/api/tokens').set(bearer(other));
    expect(list.body.items.map((t: { id: number }) => t.id)).not.toContain(created.token.id);
    expect((await request(ctx.app).delete(`/api/tokens/${created.token.id}`).set(bearer(other))).status).toBe(404);
    expect((await request(ctx.app).get('/api/auth/me').set(bearer(created.secret))).status).toBe(200);
  });

  it('cannot be used to create more tokens', async () => {
    const created = await create(`minter ${unique()}`);
    const res = await request(ctx.app).post('/api/tokens').set(bearer(created.secret)).send({ name: 'another' });
    expect(res.status).toBe(403);
    expect(res.body.error).toMatch(/signed-in session/);
  });

  it('dies with its owner: deactivation stops it at once', async () => {
    const email = `${unique('tokdeact')}@quillfield.example`;
    const password = `pw-${unique()}`;
    const user = await upsertUser({ email, name: 'Soon Gone', role: 'pm', password });
    const own = await signIn(ctx.app, { email, password });
    const created = await request(ctx.app).post('/api/tokens').set(bearer(own)).send({ name: 'job' });
    expect(created.status).toBe(201);
    const admin = await signIn(ctx.app, 'admin');
    expect((await request(ctx.app).patch(`/api/users/${user.id}`).set(bearer(admin)).send({ active: false })).status).toBe(200);
    expect((await request(ctx.app).get('/api/auth/me').set(bearer(created.body.secret))).status).toBe(401);
  });

  it('refuses a missing name and a nonsensical expiry, naming the field', async () => {
    const noName = await request(ctx.app).post('/api/tokens').set(bearer(session)).send({ name: '   ' });
    expect(noName.status).toBe(422);
    expect(noName.body.issues[0].path).toBe('name');
    const badExpiry = await request(ctx.app).post('/api/tokens').set(bearer(session)).send({ name: 'x', expiresInDays: -3 });
    expect(badExpiry.status).toBe(422);
    expect(badExpiry.body.issues[0].path).toBe('expiresInDays');
  });
});
