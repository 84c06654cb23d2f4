import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { parse } from 'csv-parse/sync';
import { testContext, signIn, unique } from '../helpers/app';
import { recordAudit } from '../../server/services/auditService';

const ctx = testContext();
let admin: string;
let compliance: string;
// Events of our own, under an action name no other test uses.
const action = `test.${unique('audit')}`;
const actorEmail = `${unique('auditor')}@quillfield.example`;

beforeAll(async () => {
  admin = await signIn(ctx.app, 'admin');
  compliance = await signIn(ctx.app, 'compliance');
  const days = ['2025-03-01T09:00:00Z', '2025-03-02T09:00:00Z', '2025-03-03T09:00:00Z', '2025-03-04T23:59:00Z', '2025-03-05T00:00:01Z'];
  for (let i = 0; i < 5; i++) {
    await recordAudit({ actor: null, action, objectType: i % 2 ? 'portfolio' : 'user', objectId: String(100 + i), ip: '10.0.0.1', details: { step: i, note: '=HYPERLINK("x")' } });
  }
  // Dated events: recordAudit stamps now(), so these are inserted with their own instants (inserts are allowed).
  await ctx.knex('audit_events').insert(
    days.map((at, i) => ({ at, actor_email: actorEmail, action: `${action}.dated`, object_type: 'user', object_id: String(i), ip: '10.0.0.2', details: { i } })),
  );
});
afterAll(() => ctx.close());

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

describe('audit trail', () => {
  it('is append-only in the database', async () => {
    const row = await ctx.knex('audit_events').where({ action }).first();
    await expect(ctx.knex('audit_events').where({ id: row.id }).update({ action: 'tampered' })).rejects.toThrow(/append-only/);
    await expect(ctx.knex('audit_events').where({ id: row.id }).del()).rejects.toThrow(/append-only/);
  });

  it('filters by action and object type, newest first, with paging', async () => {
    const all = await request(ctx.app).get('/api/audit').query({ action }).set(bearer(compliance));
    expect(all.status).toBe(200);
    expect(all.body.total).toBe(5);
    const ids = all.body.items.map((e: { id: number }) => e.id);
    expect(ids).toEqual([...ids].sort((a, b) => b - a));
    const users = await request(ctx.app).get('/api/audit').query({ action, objectType: 'user' }).set(bearer(admin));
    expect(users.body.total).toBe(3);
    const page2 = await request(ctx.app).get('/api/audit').query({ action, pageSize: 2, page: 2 }).set(bearer(admin));
    expect(page2.body).toMatchObject({ total: 5, page: 2, pageSize: 2 });
    expect(page2.body.items.map((e: { id: number }) => e.id)).toEqual(ids.slice(2, 4));
    const one = await request(ctx.app).get('/api/audit').query({ action, objectId: '102' }).set(bearer(admin));
    expect(one.body.items).toHaveLength(1);
    expect(one.body.items[0]).toMatchObject({ action, objectType: 'user', objectId: '102', ip: '10.0.0.1', details: { step: 2 } });
  });

  it('filters by actor (part of the e-mail, case-insensitive) and by date range, a bare `to` date including that day', async () => {
    const byActor = await request(ctx.app).get('/api/audit').query({ actor: actorEmail.split('@')[0].toUpperCase() }).set(bearer(admin));
    expect(byActor.body.total).toBe(5);
    const range = await request(ctx.app).get('/api/audit').query({ action: `${action}.dated`, from: '2025-03-02', to: '2025-03-04' }).set(bearer(admin));
    expect(range.body.items.map((e: { objectId: string }) => e.objectId).sort()).toEqual(['1', '2', '3']);
    const instant = await request(ctx.app).get('/api/audit').query({ action: `${action}.dated`, from: '2025-03-04T23:59:00Z', to: '2025-03-05T00:00:01Z' }).set(bearer(admin));
    expect(instant.body.total).toBe(2);
    // A LIKE wildcard in the filter is taken literally.
    const wildcard = await request(ctx.app).get('/api/audit').query({ actor: '%' }).set(bearer(admin));
    expect(wildcard.body.total).toBe(0);
  });

  it('lists the action names for the filter', async () => {
    const res = await request(ctx.app).get('/api/audit/actions').set(bearer(compliance));
    expect(res.body.items).toEqual(expect.arrayContaining([action, `${action}.dated`]));
  });

  it('exports the filtered trail as CSV (oldest first, formula-safe), and audits the export', async () => {
    const res = await request(ctx.app).get('/api/audit/export.csv').query({ action }).set(bearer(compliance));
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toMatch(/attachment; filename="loadline-audit-\d{4}-\d{2}-\d{2}\.csv"/);
    const rows = parse(res.text, { columns: true }) as Record<string, string>[];
    expect(rows).toHaveLength(5);
    expect(Object.keys(rows[0])).toEqual(['id', 'at', 'actor_id', 'actor_email', 'action', 'object_type', 'object_id', 'ip', 'details']);
    expect(rows.map((r) => Number(r.id))).toEqual(rows.map((r) => Number(r.id)).sort((a, b) => a - b));
    expect(rows[0]).toMatchObject({ action, object_type: 'user', object_id: '100', ip: '10.0.0.1' });
    expect(JSON.parse(rows[0].details)).toEqual({ step: 0, note: '=HYPERLINK("x")' });
    const exported = await ctx.knex('audit_events').where({ action: 'audit.exported' }).whereRaw(`details->'filters'->>'action' = ?`, [action]);
    expect(exported).toHaveLength(1);
  });

  it('prefixes cells a spreadsheet would run as formulas', async () => {
    await ctx.knex('audit_events').insert({ actor_email: '=cmd|calc@quillfield.example', action: `${action}.formula`, details: {} });
    const res = await request(ctx.app).get('/api/audit/export.csv').query({ action: `${action}.formula` }).set(bearer(admin));
    const [row] = parse(res.text, { columns: true }) as Record<string, string>[];
    expect(row.actor_email).toBe("'=cmd|calc@quillfield.example");
  });

  it('refuses bad filters, naming them', async () => {
    const res = await request(ctx.app).get('/api/audit').query({ from: 'yesterday', pageSize: 100000 }).set(bearer(admin));
    expect(res.status).toBe(422);
    expect(res.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['from', 'pageSize']);
  });

  it('records user and token changes made through the API', async () => {
    const created = await request(ctx.app).post('/api/tokens').set(bearer(admin)).send({ name: `audit check ${unique()}` });
    const events = await request(ctx.app).get('/api/audit').query({ action: 'token.created', objectType: 'api_token', objectId: String(created.body.token.id) }).set(bearer(compliance));
    expect(events.body.items).toHaveLength(1);
    expect(events.body.items[0]).toMatchObject({ actorEmail: 'admin@quillfield.example', details: { name: created.body.token.name } });
  });
});
