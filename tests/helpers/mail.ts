import type { Knex } from 'knex';
import { startMailSink, type MailSink } from '../../server/mail/sink';

/** The real SMTP sink on a free loopback port, storing into the test database; point the app's SMTP_URL at it. */
export async function testMailSink(knex: Knex): Promise<MailSink & { smtpUrl: string }> {
  const sink = await startMailSink({ port: 0, knex });
  return { ...sink, smtpUrl: `smtp://127.0.0.1:${sink.port}` };
}

/** Waits for the sink to have stored a message to `address` (mail is delivered and parsed asynchronously). */
export async function waitForMail(knex: Knex, address: string, options: { count?: number; timeoutMs?: number } = {}) {
  const count = options.count ?? 1;
  const deadline = Date.now() + (options.timeoutMs ?? 10_000);
  for (;;) {
    const rows = await knex('outbox_messages').whereRaw('to_address ILIKE ?', [`%${address}%`]).orderBy('id');
    if (rows.length >= count) return rows;
    if (Date.now() > deadline) throw new Error(`no mail (${rows.length}/${count}) for ${address} within the timeout`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

/** The one-time secret in a link `…/set-password?token=…` inside a message's text. */
export function linkToken(text: string): string {
  const match = /\/set-password\?token=([\w%-]+)/.exec(text);
  if (!match) throw new Error(`no set-password link in: ${text}`);
  return decodeURIComponent(match[1]);
}
