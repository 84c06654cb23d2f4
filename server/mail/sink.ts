import type { AddressInfo } from 'node:net';
import type { Knex } from 'knex';
import { SMTPServer } from 'smtp-server';
import { simpleParser, type AddressObject } from 'mailparser';

export interface MailSink {
  port: number;
  close(): Promise<void>;
}

function addresses(value: AddressObject | AddressObject[] | undefined): string {
  if (!value) return '';
  return (Array.isArray(value) ? value : [value]).map((a) => a.text).join(', ');
}

/**
 * The local SMTP sink: accepts every message on 127.0.0.1 (no auth, no STARTTLS), parses it and stores it in
 * outbox_messages so admins can read invitations and resets. Port 0 picks a free port (tests).
 */
export function startMailSink(options: { port: number; knex: Knex; host?: string; log?: (message: string) => void }): Promise<MailSink> {
  const { knex, log = () => undefined } = options;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    banner: 'Loadline local mail sink',
    size: 10 * 1024 * 1024,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then(async (mail) => {
          const envelopeTo = session.envelope.rcptTo.map((r) => r.address).join(', ');
          const envelopeFrom = session.envelope.mailFrom ? session.envelope.mailFrom.address : '';
          await knex('outbox_messages').insert({
            from_address: addresses(mail.from) || envelopeFrom,
            to_address: addresses(mail.to) || envelopeTo,
            subject: mail.subject ?? '',
            text: mail.text ?? '',
            html: typeof mail.html === 'string' ? mail.html : null,
          });
          log(`[mail] stored "${mail.subject ?? ''}" for ${envelopeTo}`);
          callback();
        })
        .catch((error: Error) => {
          log(`[mail] could not store a message: ${error.message}`);
          callback(error);
        });
    },
  });
  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port, options.host ?? '127.0.0.1', () => {
      server.off('error', reject);
      server.on('error', (error) => log(`[mail] ${error.message}`));
      const port = (server.server.address() as AddressInfo).port;
      resolve({ port, close: () => new Promise<void>((done) => server.close(() => done())) });
    });
  });
}
