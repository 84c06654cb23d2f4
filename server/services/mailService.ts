import nodemailer, { type Transporter } from 'nodemailer';
import type { Config } from '../config';
import { SET_PASSWORD_PATH, type PasswordLinkPurpose } from '../../shared/schemas/users';
import { ROLE_LABELS, type Role } from '../../shared/schemas/common';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html: string;
}

const transports = new Map<string, Transporter>();

/** SMTP_URL (smtp:// or smtps://, optional user:password) as nodemailer options; TLS is skipped only on loopback (the local sink). */
export function smtpOptions(smtpUrl: string) {
  const url = new URL(smtpUrl);
  const secure = url.protocol === 'smtps:';
  const loopback = ['127.0.0.1', 'localhost', '[::1]', '::1'].includes(url.hostname);
  return {
    host: url.hostname.replace(/^\[|\]$/g, ''),
    port: Number(url.port || (secure ? 465 : 587)),
    secure,
    ignoreTLS: loopback && !secure,
    ...(url.username ? { auth: { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) } } : {}),
    connectionTimeout: 10_000,
  };
}

/** One nodemailer transport per SMTP_URL. */
function transportFor(smtpUrl: string): Transporter {
  let transport = transports.get(smtpUrl);
  if (!transport) {
    transport = nodemailer.createTransport(smtpOptions(smtpUrl));
    transports.set(smtpUrl, transport);
  }
  return transport;
}

export async function sendMail(config: Config, mail: OutgoingMail): Promise<void> {
  await transportFor(config.smtpUrl).sendMail({ from: config.mailFrom, ...mail });
}

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

export function passwordLinkUrl(config: Config, secret: string): string {
  return `${config.publicUrl.replace(/\/$/, '')}${SET_PASSWORD_PATH}?token=${encodeURIComponent(secret)}`;
}

/** The invitation or reset message; the link is the only place the one-time secret ever appears. */
export function passwordLinkMail(
  config: Config,
  input: { purpose: PasswordLinkPurpose; to: string; name: string; role: Role; secret: string; expiresAt: Date },
): OutgoingMail {
  const url = passwordLinkUrl(config, input.secret);
  const until = input.expiresAt.toISOString().replace('T', ' ').slice(0, 16) + ' UTC';
  const invitation = input.purpose === 'invitation';
  const subject = invitation ? 'You are invited to Loadline' : 'Choose a new Loadline password';
  const lead = invitation
    ? `You have been invited to Loadline as ${ROLE_LABELS[input.role]}. Open this link to choose your password:`
    : 'Someone asked to reset your Loadline password. Open this link to choose a new one:';
  const tail = invitation
    ? `The link works once and until ${until}.`
    : `The link works once and until ${until}. If you did not ask for this, ignore this message: your password stays as it is.`;
  const text = `Hello ${input.name},\n\n${lead}\n\n${url}\n\n${tail}\n\nLoadline\n`;
  const html =
    `<p>Hello ${escapeHtml(input.name)},</p><p>${escapeHtml(lead)}</p>` +
    `<p><a href="${escapeHtml(url)}">${escapeHtml(url)}</a></p><p>${escapeHtml(tail)}</p><p>Loadline</p>`;
  return { to: input.to, subject, text, html };
}
