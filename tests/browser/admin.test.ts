import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Knex } from 'knex';
import type { BrowserContext, Page } from 'playwright-core';
import { openTestPage, signInThroughUi, startBrowserSuite } from '../helpers/browser';
import { unique } from '../helpers/app';
import { loadConfig } from '../../server/config';
import { createKnex } from '../../server/db/knex';
import { startMailSink, type MailSink } from '../../server/mail/sink';

// The admin pages end to end: a real mail sink on a free port receives the invitation the browser triggers.
let suite: Awaited<ReturnType<typeof startBrowserSuite>>;
let sink: MailSink;
let sinkKnex: Knex;
let context: BrowserContext;
let page: Page;

beforeAll(async () => {
  sinkKnex = createKnex(loadConfig().databaseUrl, { max: 2 });
  sink = await startMailSink({ port: 0, knex: sinkKnex });
  suite = await startBrowserSuite({ smtpUrl: `smtp://127.0.0.1:${sink.port}` });
  context = suite.context;
});
afterAll(async () => {
  await suite?.close();
  await sink?.close();
  await sinkKnex?.destroy();
});
beforeEach(async () => {
  page = await openTestPage(context, 'admin');
});

async function signInAs(email: string, password: string) {
  await page.goto(`${suite.url}/sign-in`);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
}

describe('users, invitations and the outbox', () => {
  const email = `${unique('invitee')}@quillfield.example`;
  const name = 'Rosalind Achterberg';
  const firstPassword = 'a-long-enough-pass';
  const password = 'another-long-pass';

  it('an admin invites a user, who follows the mailed link, sets a password and signs in', async () => {
    await signInThroughUi(page, suite.url, 'admin');
    await page.waitForURL((url) => url.pathname === '/users');
    await page.getByRole('gridcell', { name: 'compliance@quillfield.example' }).waitFor();

    await page.getByRole('button', { name: 'Invite a user' }).click();
    const form = page.getByRole('form', { name: 'Invite a user' });
    await form.getByLabel('E-mail').fill(email);
    await form.getByLabel('Name').fill(name);
    await form.getByLabel('Role').selectOption('pm');
    await form.getByRole('button', { name: 'Send invitation' }).click();
    await page.getByText(`Invitation sent to ${email}`).waitFor();
    await page.getByRole('gridcell', { name: email }).waitFor();
    await page.screenshot({ path: join(tmpdir(), 'loadline-users-admin.png') });

    // Inviting the same address again names the field.
    await page.getByRole('button', { name: 'Invite a user' }).click();
    await form.getByLabel('E-mail').fill(email.toUpperCase());
    await form.getByLabel('Name').fill(name);
    await form.getByRole('button', { name: 'Send invitation' }).click();
    await form.getByText('is already taken', { exact: true }).waitFor();
    await form.getByRole('button', { name: 'Cancel' }).click();

    // The outbox shows the message the sink received; its link leads to the set-password page.
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Outbox' }).click();
    await page.getByLabel('Recipient contains').fill(email);
    // Other test files send invitations into the same sink: wait until the filter leaves only this one.
    const invitation = page.getByRole('gridcell', { name: 'You are invited to Loadline' });
    await expect.poll(() => invitation.count(), { timeout: 15_000 }).toBe(1);
    await invitation.click();
    const message = page.getByRole('article', { name: 'Message' });
    await message.getByText(`Hello ${name}`).waitFor();
    await page.screenshot({ path: join(tmpdir(), 'loadline-outbox-admin.png') });
    const href = await message.getByRole('link').first().getAttribute('href');
    const link = new URL(href!);
    expect(link.pathname).toBe('/set-password');

    await context.clearCookies();
    await page.goto(`${suite.url}${link.pathname}${link.search}`);
    await page.getByRole('heading', { name: 'Welcome to Loadline' }).waitFor();
    await page.getByLabel('New password').fill(firstPassword);
    await page.getByLabel('Repeat the password').fill(`${firstPassword}x`);
    await page.getByRole('button', { name: 'Set password' }).click();
    await page.getByText('the two passwords differ').waitFor();
    await page.getByLabel('Repeat the password').fill(firstPassword);
    await page.getByRole('button', { name: 'Set password' }).click();
    await page.waitForURL((url) => url.pathname === '/sign-in');

    await signInAs(email, firstPassword);
    await page.waitForURL((url) => url.pathname === '/home');
    await expect(page.getByTestId('user-name').textContent()).resolves.toBe(name);
    await expect(page.getByTestId('user-role').textContent()).resolves.toBe('Portfolio manager');

    // They change it on the Password page (a wrong current password is named beside its field).
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Password' }).click();
    const change = page.getByRole('form', { name: 'Change password' });
    await change.getByLabel('Current password').fill('not-my-password');
    await change.getByLabel('New password', { exact: true }).fill(password);
    await change.getByLabel('Repeat the new password').fill(password);
    await change.getByRole('button', { name: 'Change password' }).click();
    await change.getByText('is not correct', { exact: true }).waitFor();
    await change.getByLabel('Current password').fill(firstPassword);
    await change.getByRole('button', { name: 'Change password' }).click();
    await change.getByText('Your password is changed').waitFor();
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL((url) => url.pathname === '/sign-in');
    await signInAs(email, password);
    await page.waitForURL((url) => url.pathname === '/home');

    // The link worked once only.
    await context.clearCookies();
    await page.goto(`${suite.url}${link.pathname}${link.search}`);
    await page.getByRole('alert').getByText('This link is not valid any more', { exact: false }).waitFor();
    await page.close();
  });

  it('an admin changes the role and deactivates (sign-in refused), then reactivates', async () => {
    await signInThroughUi(page, suite.url, 'admin');
    await page.getByRole('gridcell', { name: email }).click();
    // The clicked row shows as selected and the panel opens for that user.
    await page.locator('.ag-row-selected').getByText(email).waitFor();
    await page.getByLabel('Role').selectOption('compliance');
    await page.getByRole('button', { name: 'Change role' }).click();
    await page.getByText(`${name} is now compliance.`).waitFor();
    await page.getByRole('gridcell', { name: 'Compliance' }).first().waitFor();

    page.once('dialog', (dialog) => void dialog.accept());
    await page.getByRole('button', { name: 'Deactivate' }).click();
    await page.getByText(`${name} is deactivated.`).waitFor();
    await page.getByRole('button', { name: 'Reactivate' }).waitFor();

    await context.clearCookies();
    await signInAs(email, password);
    await page.getByRole('alert').waitFor();
    expect(new URL(page.url()).pathname).toBe('/sign-in');

    // Reactivated, they sign in again and land where their new role (compliance) lands.
    await signInThroughUi(page, suite.url, 'admin');
    await page.getByRole('gridcell', { name: email }).click();
    await page.getByRole('button', { name: 'Reactivate' }).click();
    await page.getByText(`${name} can sign in again.`).waitFor();
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL((url) => url.pathname === '/sign-in');
    await signInAs(email, password);
    await page.waitForURL((url) => url.pathname === '/audit');
    await page.close();
  });

  it('resending an invitation mails a new link and the older one stops working', async () => {
    const other = `${unique('resend')}@quillfield.example`;
    await signInThroughUi(page, suite.url, 'admin');
    await page.getByRole('button', { name: 'Invite a user' }).click();
    const form = page.getByRole('form', { name: 'Invite a user' });
    await form.getByLabel('E-mail').fill(other);
    await form.getByLabel('Name').fill('Teodor Vasquez-Lind');
    await form.getByRole('button', { name: 'Send invitation' }).click();
    await page.getByText(`Invitation sent to ${other}`).waitFor();
    await page.getByRole('button', { name: 'Resend invitation' }).click();
    await page.getByText(`A new invitation went to ${other}.`).waitFor();

    const mails = await sinkKnex('outbox_messages').where({ to_address: other }).orderBy('id');
    expect(mails.map((mail) => mail.subject)).toEqual(['You are invited to Loadline', 'You are invited to Loadline']);
    const linkIn = (text: string) => new URL(/https?:\/\/\S+/.exec(text)![0]);
    const [older, newer] = mails.map((mail) => linkIn(mail.text));
    await context.clearCookies();
    await page.goto(`${suite.url}${older.pathname}${older.search}`);
    await page.getByRole('alert').getByText('This link is not valid any more', { exact: false }).waitFor();
    await page.goto(`${suite.url}${newer.pathname}${newer.search}`);
    await page.getByRole('heading', { name: 'Welcome to Loadline' }).waitFor();
    await page.close();
  });

  it('forgot password: the page confirms and a reset mail reaches the outbox', async () => {
    await page.goto(`${suite.url}/sign-in`);
    await page.getByRole('link', { name: 'Forgot your password?' }).click();
    // The sign-in form stays on screen until the next page's code has loaded.
    await page.getByRole('heading', { name: 'Reset your password' }).waitFor();
    await page.getByLabel('E-mail').fill('analyst2@quillfield.example');
    await page.getByRole('button', { name: 'Send the link' }).click();
    await page.getByText('Check your mail').waitFor();
    // The server mails after answering (so timing tells nothing): wait for the sink to store it.
    const since = new Date(Date.now() - 60_000);
    let received = 0;
    for (let attempt = 0; attempt < 50 && !received; attempt++) {
      const rows = await sinkKnex('outbox_messages').where({ to_address: 'analyst2@quillfield.example', subject: 'Choose a new Loadline password' }).where('received_at', '>', since);
      received = rows.length;
      if (!received) await new Promise((resolve) => setTimeout(resolve, 200));
    }
    expect(received).toBe(1);
    await page.close();
  });
});

describe('API tokens', () => {
  it('an analyst creates a token, sees the secret once, uses it from a script, and revokes it', async () => {
    await signInThroughUi(page, suite.url, 'analyst');
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'API tokens' }).click();
    const tokenName = unique('nightly export ');
    await page.getByLabel('Token name').fill(tokenName);
    await page.getByRole('button', { name: 'Create token' }).click();
    const secret = (await page.getByTestId('token-secret').textContent())!.trim();
    expect(secret.length).toBeGreaterThan(20);
    await page.getByRole('gridcell', { name: tokenName, exact: true }).waitFor();
    await page.screenshot({ path: join(tmpdir(), 'loadline-tokens-analyst.png') });

    const asScript = () => fetch(`${suite.url}/api/auth/me`, { headers: { Authorization: `Bearer ${secret}` } });
    const before = await asScript();
    expect(before.status).toBe(200);
    expect(((await before.json()) as { email: string }).email).toBe('analyst@quillfield.example');

    page.once('dialog', (dialog) => void dialog.accept());
    await page.getByRole('button', { name: `Revoke ${tokenName}` }).click();
    await page.getByRole('row', { name: new RegExp(tokenName) }).getByText('Revoked').waitFor();
    expect((await asScript()).status).toBe(401);
    await page.close();
  });
});

describe('audit log', () => {
  it('compliance filters the trail by action and exports it as CSV', async () => {
    await signInThroughUi(page, suite.url, 'compliance');
    await page.waitForURL((url) => url.pathname === '/audit');
    await page.getByTestId('audit-total').waitFor();
    const filters = page.getByRole('form', { name: 'Audit filters' });
    await filters.getByLabel('Action').selectOption('auth.sign-in');
    await filters.getByLabel('Who (part of the e-mail)').fill('compliance@');
    await filters.getByRole('button', { name: 'Apply' }).click();
    await page.waitForURL((url) => url.searchParams.get('action') === 'auth.sign-in');
    await page.getByRole('gridcell', { name: 'compliance@quillfield.example' }).first().waitFor();
    const actions = await page.locator('[col-id="action"][role="gridcell"]').allTextContents();
    expect(actions.length).toBeGreaterThan(0);
    expect(new Set(actions)).toEqual(new Set(['auth.sign-in']));
    await page.screenshot({ path: join(tmpdir(), 'loadline-audit-compliance.png') });

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export CSV' }).click()]);
    const csv = readFileSync((await download.path())!, 'utf8').trim().split('\n');
    expect(csv[0]).toBe('id,at,actor_id,actor_email,action,object_type,object_id,ip,details');
    expect(csv.length).toBeGreaterThan(1);
    expect(csv.slice(1).every((line) => line.includes(',auth.sign-in,') && line.includes('compliance@quillfield.example'))).toBe(true);
    await page.close();
  });
});
