// The API server's start entry: `tsx server/index.ts` (npm start runs it with the worker and the mail sink).
import { loadConfig } from './config';
import { createKnex, bindModels } from './db/knex';
import { createApp } from './app';
import { ensureAdminFromEnv } from './services/bootstrapAdmin';
import { warmApprovedModels } from './services/portfolioRiskService';

const config = loadConfig();
const knex = createKnex(config.databaseUrl);
bindModels(knex);
await ensureAdminFromEnv();
const app = createApp(config);
const server = app.listen(config.port, config.host, () => {
  console.log(`[api] listening on http://${config.host}:${config.port}`);
  // In the background: a risk page asked meanwhile shares the same loading.
  warmApprovedModels().catch((error: Error) => console.warn(`[api] approved models not preloaded: ${error.message}`));
});

async function shutdown() {
  server.close();
  await knex.destroy();
  process.exit(0);
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
