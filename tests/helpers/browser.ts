import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Server } from 'node:http';
import { expect, onTestFailed, onTestFinished } from 'vitest';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { loadConfig, type Config } from '../../server/config';
import { createKnex, bindModels } from '../../server/db/knex';
import { createApp } from '../../server/app';
import { demoUser } from './app';
import type { Role } from '../../shared/schemas/common';

/** Debian's Chromium, headless, with a fresh profile; flags per the stack notes (no background networking). */
export async function launchBrowser(): Promise<{ context: BrowserContext; close: () => Promise<void> }> {
  const profile = mkdtempSync(join(tmpdir(), 'loadline-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: '/usr/bin/chromium',
    headless: true,
    viewport: { width: 1400, height: 900 },
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  });
  return {
    context,
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

/** The real app (serving the built client from dist/client) on a free loopback port; `overrides` adjust its config (e.g. smtpUrl). */
export async function startServer(overrides: Partial<Config> = {}): Promise<{ url: string; close: () => Promise<void> }> {
  const config = { ...loadConfig(), ...overrides };
  const knex = createKnex(config.databaseUrl, { max: 5 });
  bindModels(knex);
  const app = createApp({ ...config, publicUrl: 'http://127.0.0.1' });
  const server: Server = await new Promise((done) => {
    const s = app.listen(0, '127.0.0.1', () => done(s));
  });
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : 0;
  return {
    url: `http://127.0.0.1:${port}`,
    close: async () => {
      await new Promise((done) => server.close(() => done(undefined)));
      await knex.destroy();
    },
  };
}

export async function signInThroughUi(page: Page, baseUrl: string, role: Role): Promise<void> {
  const user = demoUser(role);
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel('E-mail').fill(user.email);
  await page.getByLabel('Password').fill(user.password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'));
}

/** Opens the sign-in page once with generous timeouts (call in beforeAll): a cold browser and server on a busy machine must not eat a test's time. */
export async function warmUp(context: BrowserContext, baseUrl: string): Promise<void> {
  const page = await context.newPage();
  await page.goto(`${baseUrl}/sign-in`, { timeout: 90_000 });
  await page.getByLabel('E-mail').waitFor({ timeout: 90_000 });
  await page.close();
}

/** Call in beforeEach after opening the page: when the test fails, the page's look is kept in a screenshot and its address logged. */
export function screenshotOnFailure(page: Page, label: string): void {
  onTestFailed(async ({ task }) => {
    if (page.isClosed()) return;
    const file = join(tmpdir(), `loadline-failed-${label}-${task.name.replace(/\W+/g, '-').slice(0, 60)}.png`);
    await page.screenshot({ path: file }).catch(() => undefined);
    console.error(`[browser] failed at ${page.url()}; screenshot ${file}`);
  });
}

/**
 * Collects uncaught exceptions and console errors of a page (AG Grid reports a missing module that way), leaving out
 * the browser's own "Failed to load resource" lines for HTTP errors the app handles (a 401 before sign-in, say).
 */
export function collectPageErrors(page: Page): string[] {
  const errors: string[] = [];
  page.on('pageerror', (error) => errors.push(error.message));
  page.on('console', (message) => {
    if (message.type() === 'error' && !message.text().startsWith('Failed to load resource')) errors.push(message.text());
  });
  return errors;
}

/** A browser test file's fixtures (call in beforeAll): the real app, Debian's Chromium, and one warm-up page load. */
export async function startBrowserSuite(overrides: Partial<Config> = {}): Promise<{ url: string; context: BrowserContext; close: () => Promise<void> }> {
  const server = await startServer(overrides);
  const browser = await launchBrowser();
  await warmUp(browser.context, server.url);
  return {
    url: server.url,
    context: browser.context,
    close: async () => {
      await browser.close();
      await server.close();
    },
  };
}

/**
 * A fresh page for one test (call in beforeEach): signed out, a screenshot kept if the test fails, and the test fails
 * on any uncaught exception or console error the page produced.
 */
export async function openTestPage(context: BrowserContext, label: string): Promise<Page> {
  await context.clearCookies();
  const page = await context.newPage();
  screenshotOnFailure(page, label);
  const errors = collectPageErrors(page);
  onTestFinished(() => {
    expect(errors).toEqual([]);
  });
  return page;
}
