import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import nodemailer from 'nodemailer';
import { testContext, signIn, unique } from '../helpers/app';
import { testMailSink, waitForMail, linkToken } from '../helpers/mail';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import { SET_PASSWORD_PATH } from '../../shared/schemas/users';

// The real sink on a free port; the app under test sends through it (SMTP_URL override).
const base = testContext();
let sink: Awaited<ReturnType<typeof testMailSink>>;
let app: ReturnType<typeof createApp>;
let admin: string;

beforeAll(async () => {
  sink = await testMailSink(base.knex);
  app = createApp({ ...base.config, smtpUrl: sink.smtpUrl, publicUrl: 'http://console.quillfield.example' }, { serveClient: false });
  admin = await signIn(app, 'admin');
});
afterAll(async () => {
  await sink.close();
  await base.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

describe('the local mail sink', () => {
  it('stores what any SMTP client sends, parsed, and admins read it in the outbox', async () => {
    const to = `${unique('sinkcheck')}@quillfield.example`;
    const transport = nodemailer.createTransport({ host: '127.0.0.1', port: sink.port, ignoreTLS: true });
    await transport.sendMail({ from: 'Desk <desk@quillfield.example>', to, subject: 'Morning limits', text: 'All within limits.', html: '<p>All within <b>limits</b>.</p>' });
    const [stored] = await waitForMail(base.knex, to);
    expect(stored).toMatchObject({ from_address: '"Desk" <desk@quillfield.example>', to_address: to, subject: 'Morning limits', html: '<p>All within <b>limits</b>.</p>' });
    expect(stored.text.trim()).toBe('All within limits.');

    const page = await request(app).get('/api/outbox').query({ to }).set(bearer(admin));
    expect(page.status).toBe(200);
    expect(page.body.total).toBe(1);
    expect(page.body.items[0]).toMatchObject({ id: Number(stored.id), to, subject: 'Morning limits', from: '"Desk" <desk@quillfield.example>' });
    const one = await request(app).get(`/api/outbox/${stored.id}`).set(bearer(admin));
    expect(one.body.html).toBe('<p>All within <b>limits</b>.</p>');
    expect((await request(app).get('/api/outbox/999999999').set(bearer(admin))).status).toBe(404);
  });
});

describe('invitation, end to end', () => {
  it('invite → the sink receives the link → the link sets the password → the user signs in', async () => {
    const email = `${unique('invitee')}@quillfield.example`;
    const invited = await request(app).post('/api/users').set(bearer(admin)).send({ email, name: 'Rowan Ibsen', role: 'analyst' });
    expect(invited.status).toBe(201);
    expect(invited.body).toMatchObject({ email, status: 'invited', role: 'analyst' });

    const [mail] = await waitForMail(base.knex, email);
    expect(mail.subject).toBe('You are invited to Loadline');
    expect(mail.text).toContain(`http://console.quillfield.example${SET_PASSWORD_PATH}?token=`);
    expect(mail.text).toContain('Risk analyst');
    const secret = linkToken(mail.text);
    // Only the hash of the secret is stored.
    const link = await base.knex('password_links').where({ user_id: invited.body.id }).first();
    expect(link.token_hash).not.toContain(secret);
    expect(link.purpose).toBe('invitation');

    const info = await request(app).post('/api/auth/password-link').send({ token: secret });
    expect(info.status).toBe(200);
    expect(info.body).toMatchObject({ purpose: 'invitation', email, name: 'Rowan Ibsen' });
    expect(Date.parse(info.body.expiresAt) - Date.now()).toBeGreaterThan(71 * 3_600_000); // 72 hours by default

    // Nobody can sign in before the password is set.
    expect((await request(app).post('/api/auth/sign-in').send({ email, password: 'anything-at-all' })).status).toBe(401);
    const set = await request(app).post('/api/auth/set-password').send({ token: secret, password: 'rowan-chooses-this' });
    expect(set.status).toBe(200);
    expect(set.body).toEqual({ ok: true, email });
    const token = await signIn(app, { email, password: 'rowan-chooses-this' });
    expect((await request(app).get('/api/auth/me').set(bearer(token))).body.role).toBe('analyst');

    // The link works once.
    const again = await request(app).post('/api/auth/set-password').send({ token: secret, password: 'someone-else-tries' });
    expect(again.status).toBe(400);
    expect(again.body.error).toMatch(/not valid any more/);
    expect(await base.knex('audit_events').where({ action: 'user.invitation-accepted', object_id: String(invited.body.id) })).toHaveLength(1);
  });

  it('a resent invitation replaces the old link', async () => {
    const email = `${unique('resend')}@quillfield.example`;
    const invited = await request(app).post('/api/users').set(bearer(admin)).send({ email, name: 'Kit Moreau', role: 'pm' });
    const [first] = await waitForMail(base.knex, email);
    const resent = await request(app).post(`/api/users/${invited.body.id}/invitation`).set(bearer(admin));
    expect(resent.status).toBe(200);
    const mails = await waitForMail(base.knex, email, { count: 2 });
    const oldSecret = linkToken(first.text);
    const newSecret = linkToken(mails[1].text);
    expect((await request(app).post('/api/auth/password-link').send({ token: oldSecret })).status).toBe(400);
    expect((await request(app).post('/api/auth/set-password').send({ token: newSecret, password: 'kit-password-1' })).status).toBe(200);
    // Once the password is set there is nothing to resend.
    expect((await request(app).post(`/api/users/${invited.body.id}/invitation`).set(bearer(admin))).status).toBe(409);
  });

  it('an expired invitation link is refused', async () => {
    const email = `${unique('late')}@quillfield.example`;
    const invited = await request(app).post('/api/users').set(bearer(admin)).send({ email, name: 'Sam Late', role: 'pm' });
    const [mail] = await waitForMail(base.knex, email);
    await base.knex('password_links').where({ user_id: invited.body.id }).update({ expires_at: new Date(Date.now() - 1000) });
    expect((await request(app).post('/api/auth/set-password').send({ token: linkToken(mail.text), password: 'too-late-now' })).status).toBe(400);
  });

  it('when the mail cannot be sent, the invitation is not saved (502)', async () => {
    const unreachable = createApp({ ...base.config, smtpUrl: 'smtp://127.0.0.1:9' }, { serveClient: false });
    const token = await signIn(unreachable, 'admin');
    const email = `${unique('nomail')}@quillfield.example`;
    const res = await request(unreachable).post('/api/users').set(bearer(token)).send({ email, name: 'No Mail', role: 'pm' });
    expect(res.status).toBe(502);
    expect(res.body.error).toMatch(/nothing was saved/);
    expect(await base.knex('users').whereRaw('lower(email) = lower(?)', [email])).toHaveLength(0);
    expect(await base.knex('audit_events').where({ action: 'user.invited' }).whereRaw(`details->>'email' = ?`, [email])).toHaveLength(0);
  });
});

describe('password reset, end to end', () => {
  it('request → the sink receives the link → new password → sign in; old sessions end', async () => {
    const email = `${unique('forgetful')}@quillfield.example`;
    const invited = await request(app).post('/api/users').set(bearer(admin)).send({ email, name: 'Ola Berg', role: 'compliance' });
    const [invitation] = await waitForMail(base.knex, email);
    await request(app).post('/api/auth/set-password').send({ token: linkToken(invitation.text), password: 'first-password-1' });
    const oldSession = await signIn(app, { email, password: 'first-password-1' });

    const asked = await request(app).post('/api/auth/password-reset').send({ email: email.toUpperCase() });
    expect(asked.status).toBe(202);
    expect(asked.body).toEqual({ ok: true });
    const mails = await waitForMail(base.knex, email, { count: 2 });
    expect(mails[1].subject).toBe('Choose a new Loadline password');
    const secret = linkToken(mails[1].text);
    expect((await request(app).post('/api/auth/password-link').send({ token: secret })).body.purpose).toBe('reset');
    expect((await request(app).post('/api/auth/set-password').send({ token: secret, password: 'second-password-2' })).status).toBe(200);

    expect((await request(app).get('/api/auth/me').set(bearer(oldSession))).status).toBe(401);
    expect((await request(app).post('/api/auth/sign-in').send({ email, password: 'first-password-1' })).status).toBe(401);
    await signIn(app, { email, password: 'second-password-2' });
    expect(await base.knex('audit_events').where({ action: 'user.password-reset', object_id: String(invited.body.id) })).toHaveLength(1);
  });

  it('an admin can send a reset link; the current password works until the link is used', async () => {
    const email = `${unique('adminreset')}@quillfield.example`;
    const invited = await request(app).post('/api/users').set(bearer(admin)).send({ email, name: 'Nils Aro', role: 'pm' });
    // Before a password exists, a reset makes no sense: a new invitation does.
    expect((await request(app).post(`/api/users/${invited.body.id}/password-reset`).set(bearer(admin))).status).toBe(409);
    const [invitation] = await waitForMail(base.knex, email);
    await request(app).post('/api/auth/set-password').send({ token: linkToken(invitation.text), password: 'nils-first-pass' });

    const sent = await request(app).post(`/api/users/${invited.body.id}/password-reset`).set(bearer(admin));
    expect(sent.status).toBe(200);
    const mails = await waitForMail(base.knex, email, { count: 2 });
    expect(mails[1].subject).toBe('Choose a new Loadline password');
    await signIn(app, { email, password: 'nils-first-pass' });
    expect((await request(app).post('/api/auth/set-password').send({ token: linkToken(mails[1].text), password: 'nils-second-pass' })).status).toBe(200);
    await signIn(app, { email, password: 'nils-second-pass' });
    expect(await base.knex('audit_events').where({ action: 'user.password-reset-sent', object_id: String(invited.body.id) })).toHaveLength(1);
  });

  it('answers the same for an unknown address and sends nothing', async () => {
    const email = `${unique('ghost')}@quillfield.example`;
    const res = await request(app).post('/api/auth/password-reset').send({ email });
    expect(res.status).toBe(202);
    expect(res.body).toEqual({ ok: true });
    // The request is handled after answering: wait for its audit record, then check no mail went out.
    const deadline = Date.now() + 5000;
    while (!(await base.knex('audit_events').where({ action: 'user.password-reset-requested' }).whereRaw(`details->>'email' = ?`, [email]).first())) {
      if (Date.now() > deadline) throw new Error('reset request was not recorded');
      await new Promise((resolve) => setTimeout(resolve, 100));
    }
    await new Promise((resolve) => setTimeout(resolve, 300));
    expect(await base.knex('outbox_messages').whereRaw('to_address ILIKE ?', [`%${email}%`])).toHaveLength(0);
  });

  it('is rate-limited per address with a clear 429', async () => {
    const limited = createApp({ ...base.config, smtpUrl: sink.smtpUrl, rateLimits: { ...loadConfig().rateLimits, passwordResetsPerAccount: 2, passwordResetsPerIp: 50 } }, { serveClient: false });
    const email = `${unique('flood')}@quillfield.example`;
    expect((await request(limited).post('/api/auth/password-reset').send({ email })).status).toBe(202);
    expect((await request(limited).post('/api/auth/password-reset').send({ email })).status).toBe(202);
    const third = await request(limited).post('/api/auth/password-reset').send({ email });
    expect(third.status).toBe(429);
    expect(third.body.error).toMatch(/Too many password-reset requests for this address/);
  });
});
