// The API server's start entry: `tsx server/index.ts` (npm start runs it with the worker and the mail sink).
import { loadConfig } from './config';
import { createKnex, bindModels } from './db/knex';
import { createApp } from './app';
import { ensureAdminFromEnv } from './services/bootstrapAdmin';

const config = loadConfig();
const knex = createKnex(config.databaseUrl);
bindModels(knex);
await ensureAdminFromEnv();
const app = createApp(config);
const server = app.listen(config.port, config.host, () => {
  console.log(`[api] listening on http://${config.host}:${config.port}`);
});

async function shutdown() {
  server.close();
  await knex.destroy();
  process.exit(0);
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
