// The local mail sink's start entry (npm start and npm run dev run it): stores every message in outbox_messages.
import { loadConfig } from '../config';
import { createKnex } from '../db/knex';
import { startMailSink } from './sink';

const config = loadConfig();
const knex = createKnex(config.databaseUrl, { max: 2 });
try {
  const sink = await startMailSink({ port: config.smtpSinkPort, knex, log: (message) => console.log(message) });
  console.log(`[mail] sink listening on smtp://127.0.0.1:${sink.port}`);
  const shutdown = async () => {
    await sink.close();
    await knex.destroy();
    process.exit(0);
  };
  process.on('SIGTERM', shutdown);
  process.on('SIGINT', shutdown);
} catch (error) {
  console.error(`[mail] could not listen on 127.0.0.1:${config.smtpSinkPort} (${(error as Error).message}); set SMTP_SINK_PORT to a free port`);
  await knex.destroy();
  process.exit(1);
}
