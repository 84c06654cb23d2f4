// The background worker's start entry (npm start runs it; start more on other machines against the same database).
import { loadConfig } from '../config';
import { createKnex, bindModels } from '../db/knex';
import { createBoss } from './boss';
import { registerJobHandlers } from './jobs';

const config = loadConfig();
const knex = createKnex(config.databaseUrl);
bindModels(knex);
const boss = createBoss(config.databaseUrl);
await boss.start();
await registerJobHandlers(boss);
console.log('[worker] waiting for jobs');

async function shutdown() {
  await boss.stop({ graceful: true, timeout: 5000 }).catch(() => undefined);
  await knex.destroy();
  process.exit(0);
}
process.on('SIGTERM', shutdown);
process.on('SIGINT', shutdown);
