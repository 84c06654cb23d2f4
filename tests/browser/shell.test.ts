import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { openTestPage, signInThroughUi, startBrowserSuite } from '../helpers/browser';
import { demoUser } from '../helpers/app';
import type { Role } from '../../shared/schemas/common';

// The foundation's own nav entries; other features add more, which these checks leave alone.
const FOUNDATION_NAV = ['Home', 'Users', 'Outbox', 'Audit log', 'API tokens', 'Password'] as const;
const EXPECTED: Record<Role, { landing: string; roleLabel: string; visible: string[] }> = {
  admin: { landing: '/users', roleLabel: 'Administrator', visible: ['Home', 'Users', 'Outbox', 'Audit log', 'API tokens', 'Password'] },
  analyst: { landing: '/home', roleLabel: 'Risk analyst', visible: ['Home', 'API tokens', 'Password'] },
  pm: { landing: '/home', roleLabel: 'Portfolio manager', visible: ['Home', 'API tokens', 'Password'] },
  compliance: { landing: '/audit', roleLabel: 'Compliance', visible: ['Home', 'Audit log', 'API tokens', 'Password'] },
};

let suite: Awaited<ReturnType<typeof startBrowserSuite>>;
let page: Page;

beforeAll(async () => {
  suite = await startBrowserSuite();
});
afterAll(async () => {
  await suite?.close();
});
beforeEach(async () => {
  page = await openTestPage(suite.context, 'shell');
});

const rail = () => page.getByRole('navigation', { name: 'Main' });

describe('the shell for each role', () => {
  for (const role of ['admin', 'analyst', 'pm', 'compliance'] as const) {
    it(`${role} lands on their home and sees only their navigation`, async () => {
      const expected = EXPECTED[role];
      await signInThroughUi(page, suite.url, role);
      await page.waitForURL((url) => url.pathname === expected.landing);
      await rail().getByRole('link', { name: 'Home', exact: true }).waitFor();
      for (const label of FOUNDATION_NAV) {
        const count = await rail().getByRole('link', { name: label, exact: true }).count();
        expect({ label, count }).toEqual({ label, count: expected.visible.includes(label) ? 1 : 0 });
      }
      await expect(page.getByTestId('user-name').textContent()).resolves.toBe(demoUser(role).name);
      await expect(page.getByTestId('user-role').textContent()).resolves.toBe(expected.roleLabel);
      if (role === 'admin') await page.screenshot({ path: join(tmpdir(), 'loadline-shell-admin.png') });
      if (role === 'pm') {
        await page.getByRole('heading', { level: 1 }).waitFor();
        await page.screenshot({ path: join(tmpdir(), 'loadline-home-pm.png') });
      }
      await page.close();
    });
  }
});

describe('signing in and out', () => {
  it('shows the server’s message in an alert on a wrong password and stays on the sign-in page', async () => {
    await page.goto(`${suite.url}/sign-in`);
    await page.getByLabel('E-mail').fill(demoUser('pm').email.replace('pm@', 'pm2@'));
    await page.getByLabel('Password').fill('not-the-password');
    await page.getByRole('button', { name: 'Sign in' }).click();
    const alert = page.getByRole('alert');
    await alert.waitFor();
    await expect(alert.textContent()).resolves.toContain('E-mail or password is not correct');
    expect(new URL(page.url()).pathname).toBe('/sign-in');
    await page.close();
  });

  it('shows field errors from the shared schema without calling the server', async () => {
    await page.goto(`${suite.url}/sign-in`);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByText('e-mail is required').waitFor();
    await page.getByText('password is required').waitFor();
    await page.close();
  });

  it('sign-out returns to the sign-in page and the session is gone', async () => {
    await signInThroughUi(page, suite.url, 'analyst');
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL((url) => url.pathname === '/sign-in');
    await page.getByLabel('E-mail').waitFor();
    // The cookie is cleared on the server's side too: a signed-in page sends us back.
    await page.goto(`${suite.url}/home`);
    await page.waitForURL((url) => url.pathname === '/sign-in');
    await page.close();
  });

  it('an anonymous visit to a page goes through sign-in and back to that page', async () => {
    await page.goto(`${suite.url}/audit`);
    await page.waitForURL((url) => url.pathname === '/sign-in' && url.searchParams.get('next') === '/audit');
    const user = demoUser('admin');
    await page.getByLabel('E-mail').fill(user.email);
    await page.getByLabel('Password').fill(user.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((url) => url.pathname === '/audit');
    await page.close();
  });

  it('a session that ends while the console is open leads back through sign-in to the same page', async () => {
    await signInThroughUi(page, suite.url, 'analyst');
    await page.getByRole('heading', { level: 1 }).waitFor();
    await page.context().clearCookies(); // as when the session expires or an admin deactivates the account
    await rail().getByRole('link', { name: 'API tokens' }).click();
    await page.waitForURL((url) => url.pathname === '/sign-in' && url.searchParams.get('next') === '/tokens');
    const user = demoUser('analyst');
    await page.getByLabel('E-mail').fill(user.email);
    await page.getByLabel('Password').fill(user.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL((url) => url.pathname === '/tokens');
    await page.getByRole('heading', { name: 'API tokens' }).waitFor();
    await page.close();
  });

  it('a page opened by address that the role cannot use says so', async () => {
    await signInThroughUi(page, suite.url, 'analyst');
    await page.goto(`${suite.url}/users`);
    const alert = page.getByRole('alert');
    await alert.getByText('Not available to your role').waitFor();
    expect(await page.getByRole('gridcell', { name: 'admin@quillfield.example' }).count()).toBe(0);
    await page.close();
  });

  it('loads everything from its own origin: fonts ship in the bundle, nothing comes from a CDN', async () => {
    const requested: string[] = [];
    page.on('request', (request) => requested.push(request.url()));
    await signInThroughUi(page, suite.url, 'analyst');
    await page.getByRole('heading', { level: 1 }).waitFor();
    await page.evaluate(() => document.fonts.ready);
    const foreign = requested.filter((url) => !url.startsWith(`${suite.url}/`) && !url.startsWith('data:'));
    expect(foreign).toEqual([]);
    const fonts = requested.filter((url) => /\/assets\/(inter|jetbrains-mono)-.*\.woff2$/.test(url));
    expect(fonts.some((url) => url.includes('/assets/inter-'))).toBe(true);
    expect(await page.evaluate(() => document.fonts.check('14px Inter'))).toBe(true);
    await page.close();
  });

  it('an unknown address shows the not-found page inside the shell', async () => {
    await signInThroughUi(page, suite.url, 'compliance');
    await page.goto(`${suite.url}/no-such-page`);
    await page.getByRole('heading', { name: 'No page at this address' }).waitFor();
    await rail().waitFor();
    await page.close();
  });
});
